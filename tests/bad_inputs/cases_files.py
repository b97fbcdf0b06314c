"""Files as inputs and outputs (issue 8, "outputs never destroy inputs"):

* an output path (-o) that is, or links to, an input of the same command is refused
  with status 2 and every input keeps its bytes, even with --force;
* an existing output is kept byte-identical unless --force is given (then replaced);
* an empty output path is a user error;
* only regular files are read: /dev/zero, a FIFO or a folder given as model, preset,
  connection list, weights, pulse data or run file ends within seconds with status 2;
  text inputs above the stated limit (256 MiB) are refused before reading;
* sizes stated inside HDF5 files (datasets claiming 2e9 elements, a population of
  2^32 - 1 neurons, attributes with many values, data kept in external files) are
  checked before anything is allocated: status 2 naming file and dataset.

The HDF5 files are made here with h5py; a dataset of 2e9 elements costs a few
kilobytes because HDF5 stores only the chunks that were written (or, contiguous and
never written, nothing at all) and reads the rest as the fill value.
"""
import os
import shutil
import sys

import h5py
import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.dirname(os.path.abspath(__file__))), "devices"))
from reference_pulse_data import MODEL_TEMPLATE, h5_columns, soft_bounds_reads, write_csv, write_h5  # noqa: E402

# Every case that could read forever or wait on a pipe must end well within this.
QUICK_S = 10
HUGE = 2_000_000_000  # elements a crafted dataset claims

# A model that names two more files: a connection list and a device preset.
LIST_PATHWAY = """
[pathway.listed]
from = "drive"
to = "cells"
wiring = "list"
file = "{list}"
weight = "0.1 nA"
delay = "1 ms"
"""


def cases(ck, ctx):
    files = make_inputs(ck.scratch, ctx)
    output_is_input_cases(ck, files)
    existing_output_cases(ck, files)
    empty_output_cases(ck, files)
    special_file_cases(ck, files)
    size_limit_cases(ck, files)
    run_file_cases(ck, files)
    pulse_hdf5_cases(ck, files)


class Files:
    """Paths of the valid inputs every case starts from (copies in the scratch folder)."""


def make_inputs(scratch, ctx):
    f = Files()
    f.dir = os.path.join(scratch, "files")
    os.makedirs(f.dir)
    f.preset = os.path.join(f.dir, "preset.toml")
    shutil.copyfile(os.path.join(ctx.repo, "models", "devices", "ferroelectric_soft_bounds.toml"), f.preset)
    f.list = os.path.join(f.dir, "connections.csv")
    with open(f.list, "w", encoding="utf-8") as out:
        out.write("pre,post\n0,0\n1,1\n0,1\n")
    f.model = os.path.join(f.dir, "model.toml")
    with open(f.model, "w", encoding="utf-8") as out:
        out.write(MODEL_TEMPLATE.format(preset="preset.toml") + LIST_PATHWAY.format(list="connections.csv"))
    f.weights = os.path.join(f.dir, "weights.csv")
    shutil.copyfile(os.path.join(ctx.repo, "models", "weights_example.csv"), f.weights)
    f.data = os.path.join(f.dir, "pulses.csv")
    write_csv(f.data, soft_bounds_reads(devices=2, cycles=2, pulses=30))
    f.data_h5 = os.path.join(f.dir, "pulses.h5")
    write_h5(f.data_h5, h5_columns(soft_bounds_reads(devices=2, cycles=2, pulses=30)))
    f.fifo = os.path.join(f.dir, "pipe")
    os.mkfifo(f.fifo)
    f.folder = os.path.join(f.dir, "a_folder")
    os.mkdir(f.folder)
    f.inputs = (f.model, f.list, f.preset, f.weights, f.data, f.data_h5)
    return f


def run_args(f, out, *extra):
    return ["run", f.model, "-o", out, "-q", *extra]


def fit_args(f, out, *extra, data=None):
    return ["fit-device", data or f.data, "--model", "soft_bounds", "-o", out, *extra]


def map_args(f, out, *extra):
    return ["map-weights", f.weights, "--preset", f.preset, "--weight-max", "0.2 nA", "-o", out, *extra]


def device_args(f, out, *extra):
    return ["device", f.preset, "--devices", "4", "--cycles", "1", "-o", out, *extra]


def output_is_input_cases(ck, f):
    refused = "would destroy it"

    def case(name, args, out, texts=()):
        ck.case(name, args, texts=[out, "'-o'", refused, *texts], output=out, keep_output=(out,),
                unchanged=f.inputs)

    case("run -o MODEL", run_args(f, f.model), f.model, ["is the input"])
    case("run -o MODEL --force", run_args(f, f.model, "--force"), f.model, ["even with --force"])
    relative = os.path.join(f.dir, "a_folder", "..", "model.toml")
    case("run -o MODEL by another spelling", run_args(f, relative), relative, ["is the input"])
    case("run -o CSV list the model names", run_args(f, f.list), f.list, [f.list])
    case("run -o preset the model names", run_args(f, f.preset), f.preset, [f.preset])

    symlink = os.path.join(f.dir, "symlink_to_model.toml")
    os.symlink(f.model, symlink)
    case("run -o symlink to MODEL", run_args(f, symlink), symlink, ["is a link to the input"])
    hardlink = os.path.join(f.dir, "hardlink_to_model.toml")
    os.link(f.model, hardlink)
    case("run -o hard link to MODEL", run_args(f, hardlink, "--force"), hardlink, ["is a link to the input"])
    linked_folder = os.path.join(ck.scratch, "link_to_files")
    os.symlink(f.dir, linked_folder)
    through = os.path.join(linked_folder, "connections.csv")
    case("run -o CSV list through a linked folder", run_args(f, through), through, ["is a link to the input"])

    case("fit-device -o DATA", fit_args(f, f.data), f.data)
    case("fit-device -o DATA (HDF5) --force", fit_args(f, f.data_h5, "--force", data=f.data_h5), f.data_h5)
    case("map-weights -o WEIGHTS", map_args(f, f.weights), f.weights)
    case("map-weights -o PRESET --force", map_args(f, f.preset, "--force"), f.preset)
    case("device -o PRESET", device_args(f, f.preset), f.preset)
    if not (os.path.islink(symlink) and os.path.isfile(hardlink)):
        ck.report("links used as outputs are kept", ["a link was removed or replaced"])


def existing_output_cases(ck, f):
    commands = (("run", run_args, "h5"), ("fit-device", fit_args, "toml"), ("map-weights", map_args, "h5"),
                ("device", device_args, "h5"))
    for name, args, ext in commands:
        existing = os.path.join(f.dir, f"existing_{name}.{ext}")
        with open(existing, "w", encoding="utf-8") as out:
            out.write("an earlier result that must survive\n")
        ck.case(f"{name}: existing output without --force", args(f, existing),
                texts=[existing, "'-o'", "already exists", "--force"], output=existing, keep_output=(existing,),
                unchanged=(existing, *f.inputs))
        with open(existing, "rb") as old:
            before = old.read()
        code, _, stderr = ck.case(f"{name}: existing output with --force", args(f, existing, "--force"),
                                  status=0, absent=("error",), unchanged=f.inputs)
        with open(existing, "rb") as new:
            after = new.read()
        problems = [] if after != before and after else ["the file was not replaced"]
        leftovers = [p for p in ck.leftovers(existing) if p != existing]
        if leftovers:
            problems.append(f"left behind: {', '.join(leftovers)}")
        ck.report(f"{name}: --force replaced the output", problems, stderr)


def empty_output_cases(ck, f):
    for name, args in (("run", run_args), ("fit-device", fit_args), ("map-weights", map_args),
                       ("device", device_args)):
        ck.case(f"{name} -o ''", args(f, ""), texts=["'-o'", "the output path is empty"], unchanged=f.inputs)


def special_file_cases(ck, f):
    out_h5 = os.path.join(ck.scratch, "special_out.h5")
    out_toml = os.path.join(ck.scratch, "special_out.toml")
    for special, kind in (("/dev/zero", "is a character device"), (f.fifo, "is a FIFO"),
                          (f.folder, "is a folder")):
        label = os.path.basename(special)

        def case(name, args, what, out=None):
            ck.case(f"{label} as {name}", args, texts=[special, kind, what], output=out, timeout=QUICK_S)

        case("model (run)", ["run", special, "-o", out_h5], "model file", out_h5)
        case("model (check)", ["check", special], "model file")
        case("preset (device)", ["device", special, "-o", out_h5], "device preset", out_h5)
        case("preset (map-weights)", ["map-weights", f.weights, "--preset", special, "--weight-max", "0.2 nA"],
             "device preset")
        case("weights (map-weights)", ["map-weights", special, "--preset", f.preset, "--weight-max", "0.2 nA",
                                       "-o", out_h5], "weight matrix file", out_h5)
        case("pulse data (fit-device)", ["fit-device", special, "--model", "soft_bounds", "-o", out_toml],
             "pulse-data file", out_toml)
        case("run file (summary)", ["summary", special], "run file")

        # Files named inside a model: the connection list and the preset.
        named = os.path.join(f.dir, f"names_{label}.toml")
        with open(named, "w", encoding="utf-8") as out:
            out.write(MODEL_TEMPLATE.format(preset="preset.toml") + LIST_PATHWAY.format(list=special))
        case("connection list named by a model", ["check", named], "connection list")
        named_preset = os.path.join(f.dir, f"preset_{label}.toml")
        with open(named_preset, "w", encoding="utf-8") as out:
            out.write(MODEL_TEMPLATE.format(preset=special))
        case("preset named by a model", ["check", named_preset], "device preset")


def size_limit_cases(ck, f):
    """Sparse files just above the 256 MiB limit for text inputs: refused before reading."""
    big = 300 << 20

    def sparse(name, head):
        path = os.path.join(f.dir, name)
        with open(path, "wb") as out:
            out.write(head)
            out.truncate(big)
        return path

    limit = "may be at most 256.0 MiB"
    model = sparse("huge_model.toml", b"# a model file padded with zero bytes\n")
    ck.case("model file above the size limit", ["check", model], texts=[model, limit, "model file"],
            timeout=QUICK_S)
    weights = sparse("huge_weights.csv", b"# unit: nA\n")
    ck.case("weights file above the size limit", ["map-weights", weights, "--preset", f.preset, "--weight-max",
                                                  "0.2 nA"], texts=[weights, limit], timeout=QUICK_S)
    data = sparse("huge_pulses.csv", b"device,cycle,pulse,polarity,conductance [uS]\n")
    ck.case("pulse data above the size limit", ["fit-device", data, "--model", "soft_bounds"],
            texts=[data, limit], timeout=QUICK_S)
    csv = sparse("huge_list.csv", b"pre,post\n")
    named = os.path.join(f.dir, "names_huge_list.toml")
    with open(named, "w", encoding="utf-8") as out:
        out.write(MODEL_TEMPLATE.format(preset="preset.toml") + LIST_PATHWAY.format(list="huge_list.csv"))
    ck.case("connection list above the size limit", ["check", named], texts=[csv, limit, "connection list"],
            timeout=QUICK_S)
    for path in (model, weights, data, csv):
        os.remove(path)


def run_file_cases(ck, f):
    base = os.path.join(f.dir, "base_run.h5")
    code, _, stderr = ck.run(["run", f.model, "-o", base, "-q"], timeout=60)
    ck.report("control: the model of these cases runs", [] if code == 0 else [f"exit status {code}"], stderr)
    if code != 0:
        return
    code, stdout, stderr = ck.run(["summary", base], timeout=60)
    ck.report("control: summary of its run file", [] if code == 0 and "cells" in stdout else
              [f"exit status {code}"], stderr)

    def crafted(name, change):
        path = os.path.join(f.dir, name + ".h5")
        shutil.copyfile(base, path)
        with h5py.File(path, "r+") as h5:
            change(h5)
        return path

    def summary(name, path, texts):
        ck.case(f"summary: {name}", ["summary", path], texts=[path, *texts], timeout=QUICK_S)

    def replace(h5, name, **create):
        del h5[name]
        return h5.create_dataset(name, **create)

    def huge_chunked(h5):
        ds = replace(h5, "spikes/cells/time", shape=(HUGE,), maxshape=(None,), dtype="f8", chunks=(16384,),
                     compression="gzip")
        ds[:16384] = np.arange(16384) * 1e-4  # one chunk written; the rest reads as fill values
        replace(h5, "spikes/cells/neuron", shape=(HUGE,), maxshape=(None,), dtype="u4", chunks=(16384,),
                compression="gzip")

    summary("spike datasets claim 2e9 elements (chunked, compressed, mostly unwritten)",
            crafted("huge_chunked", huge_chunked), ["'/spikes/cells/time'", f"claims {HUGE} elements"])

    def huge_fill(h5):
        replace(h5, "spikes/cells/time", shape=(HUGE,), dtype="f8", fillvalue=0.5)
        replace(h5, "spikes/cells/neuron", shape=(HUGE,), dtype="u4", fillvalue=1)

    summary("spike datasets claim 2e9 elements (contiguous, never written, fill value)",
            crafted("huge_fill", huge_fill), ["'/spikes/cells/time'", "fill values"])

    def external(h5):
        n = h5["spikes/cells/time"].shape[0]
        replace(h5, "spikes/cells/time", shape=(n,), dtype="f8", external=[("/dev/zero", 0, 8 * n)])

    summary("spike times kept in an external file (/dev/zero)", crafted("external", external),
            ["'/spikes/cells/time'", "external files"])

    def many_values(h5):
        h5["populations/cells"].attrs["neuron_model"] = np.array([b"lif"] * 1000)

    summary("a one-value attribute holding 1000 values", crafted("attribute_array", many_values),
            ["'/populations/cells@neuron_model'", "holds 1000 values"])

    if os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE") < (256 << 30):
        def huge_population(h5):
            h5["populations/cells"].attrs.modify("size", np.uint32(2**32 - 1))

        summary("a population stating 4294967295 neurons", crafted("huge_population", huge_population),
                ["population 'cells'", "states 4294967295 neurons", "memory"])
    else:
        ck.skip("summary: a population stating 4294967295 neurons", "this machine could hold it (256 GiB or more)")

    truncated = os.path.join(f.dir, "truncated.h5")
    with open(base, "rb") as src, open(truncated, "wb") as out:
        out.write(src.read(os.path.getsize(base) // 2))
    summary("truncated run file", truncated, ["cannot open run file"])
    text = os.path.join(f.dir, "not_hdf5.h5")
    shutil.copyfile(f.model, text)
    summary("a text file as run file", text, ["not an HDF5 file"])


def pulse_hdf5_cases(ck, f):
    out = os.path.join(ck.scratch, "pulse_out.toml")

    def fit(name, path, texts):
        ck.case(f"fit-device: {name}", ["fit-device", path, "--model", "soft_bounds", "-o", out],
                texts=[path, *texts], output=out, timeout=QUICK_S)

    def crafted(name, change):
        path = os.path.join(f.dir, name + ".h5")
        shutil.copyfile(f.data_h5, path)
        with h5py.File(path, "r+") as h5:
            for column in ("device", "cycle", "pulse", "polarity", "conductance"):
                change(h5, column)
        return path

    def huge_chunked(h5, column):
        units = h5["pulses"][column].attrs.get("units")
        del h5["pulses"][column]
        ds = h5["pulses"].create_dataset(column, shape=(HUGE,), maxshape=(None,), dtype="f8" if units else "i8",
                                         chunks=(16384,), compression="gzip")
        ds[:16384] = 1
        if units:
            ds.attrs["units"] = units

    fit("columns claim 2e9 elements (chunked, compressed, mostly unwritten)", crafted("pulses_huge", huge_chunked),
        ["'/pulses/device'", f"claims {HUGE} elements"])

    def huge_fill(h5, column):
        units = h5["pulses"][column].attrs.get("units")
        del h5["pulses"][column]
        ds = h5["pulses"].create_dataset(column, shape=(HUGE,), dtype="f8" if units else "i8", fillvalue=1)
        if units:
            ds.attrs["units"] = units

    fit("columns claim 2e9 elements (contiguous, fill value)", crafted("pulses_fill", huge_fill),
        ["'/pulses/device'", "fill values"])

    def units_array(h5, column):
        if column == "conductance":
            h5["pulses"][column].attrs["units"] = np.array([b"uS"] * 5)

    fit("units attribute holding 5 values", crafted("pulses_units_array", units_array),
        ["'/pulses/conductance'", "attribute 'units' holds 5 values"])
