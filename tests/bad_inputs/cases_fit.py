"""Bad inputs of `nvsyn fit-device`: malformed pulse-data files (CSV in pulse_data/,
HDF5 made here with h5py from valid reference data), malformed device presets
(presets/, used by a small model through `nvsyn check`), and bad options. Each
exits 2 with a message naming the file, the line or row, and the key, and leaves
nothing at the output path.
"""
import glob
import os
import sys

import h5py
import numpy as np

from checker import expected_texts
from expectations import read_expectations

sys.path.insert(0, os.path.join(os.path.dirname(os.path.dirname(os.path.abspath(__file__))), "devices"))
from reference_pulse_data import MODEL_TEMPLATE, h5_columns, soft_bounds_reads, write_csv, write_h5  # noqa: E402


def user_error(ck, name, args, texts, output=None):
    ck.case(name, args, texts=texts, output=output)


def cases(ck, ctx):
    write_csv(os.path.join(ck.scratch, "reference.csv"), soft_bounds_reads())
    bad_data_cases(ck, ctx.corpus)
    bad_preset_cases(ck, ctx.corpus)
    bad_hdf5_cases(ck)
    option_cases(ck)


def bad_data_cases(ck, data_dir):
    out = os.path.join(ck.scratch, "out.toml")
    files = sorted(glob.glob(os.path.join(data_dir, "pulse_data", "*.csv")))
    if not files:
        ck.report("bad pulse-data files present", ["none found"])
    for path in files:
        expect = read_expectations(path)
        if "text" not in expect:
            ck.report(os.path.basename(path), ["no '# expect-text:'"])
            continue
        user_error(ck, f"data   {os.path.basename(path)}",
                      ["fit-device", path, "--model", expect.get("model", "linear_levels"), "-o", out],
                      expected_texts(path, expect), output=out)


def bad_preset_cases(ck, data_dir):
    files = sorted(glob.glob(os.path.join(data_dir, "presets", "*.toml")))
    if not files:
        ck.report("bad presets present", ["none found"])
    for path in files:
        expect = read_expectations(path)
        if "text" not in expect:
            ck.report(os.path.basename(path), ["no '# expect-text:'"])
            continue
        model = os.path.join(ck.scratch, "model_" + os.path.basename(path))
        with open(model, "w", encoding="utf-8") as f:
            f.write(MODEL_TEMPLATE.format(preset=path))
        user_error(ck, f"preset {os.path.basename(path)}", ["check", model], expected_texts(path, expect))


def bad_hdf5_cases(ck):
    rows = soft_bounds_reads(devices=1, cycles=1, pulses=2)  # 6 rows: potentiate 0-2, depress 0-2
    out = os.path.join(ck.scratch, "out.toml")

    def case(name, change, texts, with_read_time=False):
        cols = h5_columns(rows)
        if with_read_time:
            cols["read_time"] = (np.full(len(rows), 1.0), "s")
        path = os.path.join(ck.scratch, name + ".h5")
        change(cols)
        write_h5(path, cols)
        user_error(ck, f"hdf5   {name}", ["fit-device", path, "--model", "soft_bounds", "-o", out],
                      [path, *texts], output=out)

    def negative(cols):
        cols["conductance"][0][3] = -0.2

    def nan_time(cols):
        cols["read_time"][0][2] = np.nan

    def zero_polarity(cols):
        cols["polarity"][0][1] = 0

    def pulse_back(cols):
        cols["pulse"][0][5] = 0

    case("conductance_negative", negative, ["'/pulses/conductance'", "row 3:", "cannot be negative"])
    case("read_time_nan", nan_time, ["'/pulses/read_time'", "row 2:", "nan is not a finite number"], True)
    case("polarity_zero", zero_polarity, ["'/pulses/polarity'", "row 1:", "0 is not a polarity"])
    case("pulse_not_increasing", pulse_back, ["'/pulses/pulse'", "row 5:", "must increase"])
    case("cycle_missing", lambda c: c.pop("cycle"), ["'/pulses/cycle'", "missing dataset"])
    case("pulse_shorter", lambda c: c.update(pulse=(c["pulse"][0][:-1], None)),
         ["'/pulses/pulse'", "has 5 values but /pulses/device has 6"])
    case("pulse_float", lambda c: c.update(pulse=(c["pulse"][0].astype(np.float64), None)),
         ["'/pulses/pulse'", "must hold integers"])
    case("conductance_without_units", lambda c: c.update(conductance=(c["conductance"][0], None)),
         ["'/pulses/conductance'", "needs a string attribute 'units'"])
    case("conductance_units_time", lambda c: c.update(conductance=(c["conductance"][0], "ms")),
         ["'/pulses/conductance'", "is a time, expected a conductance"])
    case("device_two_dimensional", lambda c: c.update(device=(c["device"][0].reshape(2, 3), None)),
         ["'/pulses/device'", "expected a one-dimensional dataset"])

    no_group = os.path.join(ck.scratch, "no_group.h5")
    with h5py.File(no_group, "w") as f:
        f.create_group("measurements")
    user_error(ck, "hdf5   group missing", ["fit-device", no_group, "--model", "soft_bounds", "-o", out],
                  [no_group, "'/pulses'", "missing group"], output=out)


def option_cases(ck):
    data = os.path.join(ck.scratch, "reference.csv")
    out = os.path.join(ck.scratch, "out.toml")
    missing = os.path.join(ck.scratch, "no_such_data.csv")
    user_error(ck, "data file missing", ["fit-device", missing, "--model", "soft_bounds", "-o", out],
                  [missing, "cannot read the pulse-data file"], output=out)
    user_error(ck, "--model unknown", ["fit-device", data, "--model", "memristor", "-o", out],
                  ["'--model'", "unknown device model 'memristor'", "soft_bounds"], output=out)
    user_error(ck, "--model ideal", ["fit-device", data, "--model", "ideal", "-o", out],
                  ["'--model'", "no pulse response to fit"], output=out)
    user_error(ck, "--full-range-pulses for another model",
                  ["fit-device", data, "--model", "soft_bounds", "--full-range-pulses", "64", "-o", out],
                  ["'--full-range-pulses'", "applies only to --model exponential_saturation"], output=out)
    user_error(ck, "--full-range-pulses below 1",
                  ["fit-device", data, "--model", "exponential_saturation", "--full-range-pulses", "0.5", "-o", out],
                  ["'--full-range-pulses'", "must be at least 1"], output=out)
    user_error(ck, "--degree 3", ["fit-device", data, "--model", "phase_change", "--degree", "3", "-o", out],
                  ["'--degree'", "must be 1 or 2"], output=out)
    bad_out = os.path.join(ck.scratch, "no_such_folder", "fit.toml")
    user_error(ck, "output folder missing", ["fit-device", data, "--model", "soft_bounds", "-o", bad_out],
                  [bad_out, "'-o'", "does not exist"], output=bad_out)
    user_error(ck, "without --model", ["fit-device", data], ["--model"])
