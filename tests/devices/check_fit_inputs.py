#!/usr/bin/python3
"""nvsyn fit-device end to end: good data give a preset that recovers the parameters
they were made with and loads in a model; malformed data files and presets give exit
status 2 with a message naming the file, the line or row, and the key (DESIGN.md,
"Errors"), and leave nothing at the output path.

Usage: check_fit_inputs.py NVSYN TESTS_DEVICES_DIR SCRATCH_DIR

  TESTS_DEVICES_DIR/bad_data/*.csv      malformed pulse data; leading comments state
                                        what the error must say:
                                          # expect-model: soft_bounds  (default linear_levels)
                                          # expect-line: 9   # expect-key: pulse   # expect-text: ...
  TESTS_DEVICES_DIR/bad_presets/*.toml  malformed presets, used by a small model through
                                        `nvsyn check`; same expect- comments
Malformed HDF5 files are made here with h5py from a valid data set. Reference data
are made here with numpy from the soft-bounds law written out independently:
  dG+ = alpha_p (g_max - G), dG- = -alpha_d (G - g_min), each step times (1 + c N(0, 1)).
The last line printed is "N passed, M failed".
"""
import glob
import os
import shutil
import subprocess
import sys
import tomllib

import h5py
import numpy as np

sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
from bad_input_expectations import read_expectations  # noqa: E402

USER_ERROR = 2
TIMEOUT_S = 120

# The reference device (values in uS where conductances).
TRUTH = {"g_min": 0.5, "g_max": 20.0, "alpha_p": 0.04, "alpha_d": 0.06, "programming_noise": 0.1}

MODEL_TEMPLATE = """[simulation]
duration = "10 ms"

[population.cells]
size = 2

[input.drive]
kind = "poisson"
size = 2
rate = "10 Hz"

[pathway.drive_cells]
from = "drive"

to = "cells"
wiring = "one_to_one"
weight = "0.1 nA"
delay = "1 ms"

[pathway.drive_cells.synapse]
preset = "{preset}"
weight_max = "0.2 nA"
"""


class Checker:
    def __init__(self, nvsyn, scratch):
        self.nvsyn, self.scratch = nvsyn, scratch
        self.passed = self.failed = 0

    def run(self, args):
        try:
            p = subprocess.run([self.nvsyn, *args], capture_output=True, text=True, errors="replace",
                               timeout=TIMEOUT_S)
            return p.returncode, p.stdout, p.stderr
        except subprocess.TimeoutExpired:
            return None, "", f"no exit within {TIMEOUT_S} s"

    def report(self, name, problems, detail=""):
        if problems:
            self.failed += 1
            print(f"FAIL {name}: {'; '.join(problems)}")
            for line in detail.strip().splitlines():
                print(f"     | {line}")
        else:
            self.passed += 1
            print(f"ok   {name}")

    def user_error(self, name, args, texts, output=None):
        """Exit status 2, stderr holding every text, no crash, nothing left at `output`."""
        code, _, err = self.run(args)
        problems = []
        if code != USER_ERROR:
            problems.append(f"exit status {code}, expected {USER_ERROR}")
        problems += [f"stderr lacks {t!r}" for t in texts if t not in err]
        if "error:" not in err:
            problems.append("no 'error:' message")
        if "internal error" in err:
            problems.append("internal error")
        if output is not None:
            left = [p for p in [output, *glob.glob(glob.escape(output) + ".partial-*")] if os.path.exists(p)]
            if left:
                problems.append(f"left behind: {', '.join(left)}")
                for p in left:
                    os.remove(p)
        self.report(name, problems, err)


def expected_texts(path, expect):
    texts = [expect["text"]]
    texts.append(f"{path}:{expect['line']}:" if "line" in expect else path)
    if "key" in expect:
        texts.append(f"'{expect['key']}'")
    return texts


def soft_bounds_reads(seed=1, devices=6, cycles=5, pulses=80):
    """Rows (device, cycle, pulse, polarity, conductance in uS) of the reference device."""
    rng = np.random.default_rng(seed)
    t = TRUTH
    rows = []
    for d in range(devices):
        g = t["g_min"]
        for c in range(cycles):
            for pol, sign in (("potentiate", 1), ("depress", -1)):
                rows.append((d, c, 0, pol, g))
                for n in range(1, pulses + 1):
                    step = t["alpha_p"] * (t["g_max"] - g) if sign > 0 else -t["alpha_d"] * (g - t["g_min"])
                    g += step * (1 + t["programming_noise"] * rng.standard_normal())
                    g = min(max(g, t["g_min"]), t["g_max"])
                    rows.append((d, c, n, pol, g))
    # As a measurement file would hold them: six decimals of uS.
    return [(d, c, n, pol, float(f"{g:.6f}")) for d, c, n, pol, g in rows]


def write_csv(path, rows):
    with open(path, "w", encoding="utf-8") as f:
        f.write("device,cycle,pulse,polarity,conductance [uS]\n")
        for d, c, n, pol, g in rows:
            f.write(f"{d},{c},{n},{pol},{g:.6f}\n")


def write_h5(path, columns, string_polarity=False):
    with h5py.File(path, "w") as f:
        g = f.create_group("pulses")
        for name, (values, units) in columns.items():
            if name == "polarity" and string_polarity:
                ds = g.create_dataset(name, data=np.array(values, dtype=object), dtype=h5py.string_dtype())
            else:
                ds = g.create_dataset(name, data=values)
            if units is not None:
                ds.attrs["units"] = units


def h5_columns(rows):
    return {
        "device": (np.array([r[0] for r in rows], dtype=np.uint32), None),
        "cycle": (np.array([r[1] for r in rows], dtype=np.uint32), None),
        "pulse": (np.array([r[2] for r in rows], dtype=np.uint32), None),
        "polarity": (np.array([1 if r[3] == "potentiate" else -1 for r in rows], dtype=np.int8), None),
        "conductance": (np.array([r[4] for r in rows], dtype=np.float64), "uS"),
    }


def to_si(value):
    """ "12.3 uS" -> 1.23e-5; numbers pass through."""
    if not isinstance(value, str):
        return float(value)
    number, unit = value.split()
    prefixes = {"f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "m": 1e-3, "": 1.0, "k": 1e3}
    return float(number) * prefixes[unit[:-1]]


def good_cases(ck, data_dir):
    scratch = ck.scratch
    rows = soft_bounds_reads()
    csv_path = os.path.join(scratch, "reference.csv")
    write_csv(csv_path, rows)
    preset_path = os.path.join(scratch, "reference_fit.toml")
    code, out, err = ck.run(["fit-device", csv_path, "--model", "soft_bounds", "-o", preset_path])
    problems = [] if code == 0 else [f"exit status {code}"]
    fitted = None
    if code == 0:
        with open(preset_path, "rb") as f:
            fitted = tomllib.load(f)
        device, unc = fitted["device"], fitted["fit"]["uncertainty"]
        if device.get("model") != "soft_bounds":
            problems.append(f"model {device.get('model')!r}")
        # |fit - truth| < 4 standard errors as reported, and the error small enough for
        # the fit to be informative: below 5% of the value (the noise estimate from ~4800
        # steps whose sizes vary 50-fold has a relative error near 2%), or for
        # conductances below 0.5% of the range g_max - g_min.
        range_si = (TRUTH["g_max"] - TRUTH["g_min"]) * 1e-6
        for key, truth in TRUTH.items():
            truth_si = truth * 1e-6 if key.startswith("g_") else truth
            value, sigma = to_si(device[key]), to_si(unc[key])
            small = 0.005 * range_si if key.startswith("g_") else 0.05 * truth_si
            if not (abs(value - truth_si) < 4 * sigma and sigma < small):
                problems.append(f"{key} = {value:g} +- {sigma:g}, true {truth_si:g}")
        if fitted["fit"]["verdict"] != "good":
            problems.append(f"verdict {fitted['fit']['verdict']}")
        if "verdict: good" not in out:
            problems.append("summary lacks the verdict")
    ck.report("fit of numpy-made soft-bounds data recovers the parameters", problems, out + err)

    if fitted is not None:
        model = os.path.join(scratch, "uses_fit.toml")
        with open(model, "w", encoding="utf-8") as f:
            f.write(MODEL_TEMPLATE.format(preset=preset_path))
        code, out, err = ck.run(["check", model])
        ck.report("the fitted preset loads in a model (nvsyn check)", [] if code == 0 else [f"exit status {code}"], err)

        # The same reads as HDF5 (integer and string polarities) give the same device table.
        for string_polarity in (False, True):
            h5 = os.path.join(scratch, f"reference_{'strings' if string_polarity else 'ints'}.h5")
            cols = h5_columns(rows)
            if string_polarity:
                cols["polarity"] = ([r[3] for r in rows], None)
            write_h5(h5, cols, string_polarity)
            code, out, err = ck.run(["fit-device", h5, "--model", "soft_bounds"])
            problems = [] if code == 0 else [f"exit status {code}"]
            if code == 0 and tomllib.loads(out)["device"] != fitted["device"]:
                problems.append("the [device] table differs from the CSV fit")
            ck.report(f"HDF5 data ({'string' if string_polarity else 'integer'} polarity) fit as the CSV does",
                      problems, err)

    # A wrong model is a result, not an error: exit 0 and verdict "poor".
    code, out, err = ck.run(["fit-device", csv_path, "--model", "linear_levels"])
    problems = [] if code == 0 else [f"exit status {code}"]
    if code == 0 and tomllib.loads(out)["fit"]["verdict"] != "poor":
        problems.append("soft-bounds data fitted as linear_levels not judged poor")
    ck.report("wrong model: soft-bounds data as linear_levels is judged poor", problems, err)


def bad_data_cases(ck, data_dir):
    out = os.path.join(ck.scratch, "out.toml")
    files = sorted(glob.glob(os.path.join(data_dir, "bad_data", "*.csv")))
    if not files:
        ck.report("bad data files present", ["none found"])
    for path in files:
        expect = read_expectations(path)
        if "text" not in expect:
            ck.report(os.path.basename(path), ["no '# expect-text:'"])
            continue
        ck.user_error(f"data   {os.path.basename(path)}",
                      ["fit-device", path, "--model", expect.get("model", "linear_levels"), "-o", out],
                      expected_texts(path, expect), output=out)


def bad_preset_cases(ck, data_dir):
    files = sorted(glob.glob(os.path.join(data_dir, "bad_presets", "*.toml")))
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
        ck.user_error(f"preset {os.path.basename(path)}", ["check", model], expected_texts(path, expect))


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
        ck.user_error(f"hdf5   {name}", ["fit-device", path, "--model", "soft_bounds", "-o", out],
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
    ck.user_error("hdf5   group missing", ["fit-device", no_group, "--model", "soft_bounds", "-o", out],
                  [no_group, "'/pulses'", "missing group"], output=out)


def option_cases(ck):
    data = os.path.join(ck.scratch, "reference.csv")
    out = os.path.join(ck.scratch, "out.toml")
    missing = os.path.join(ck.scratch, "no_such_data.csv")
    ck.user_error("data file missing", ["fit-device", missing, "--model", "soft_bounds", "-o", out],
                  [missing, "cannot read the pulse-data file"], output=out)
    ck.user_error("--model unknown", ["fit-device", data, "--model", "memristor", "-o", out],
                  ["'--model'", "unknown device model 'memristor'", "soft_bounds"], output=out)
    ck.user_error("--model ideal", ["fit-device", data, "--model", "ideal", "-o", out],
                  ["'--model'", "no pulse response to fit"], output=out)
    ck.user_error("--full-range-pulses for another model",
                  ["fit-device", data, "--model", "soft_bounds", "--full-range-pulses", "64", "-o", out],
                  ["'--full-range-pulses'", "applies only to --model exponential_saturation"], output=out)
    ck.user_error("--full-range-pulses below 1",
                  ["fit-device", data, "--model", "exponential_saturation", "--full-range-pulses", "0.5", "-o", out],
                  ["'--full-range-pulses'", "must be at least 1"], output=out)
    ck.user_error("--degree 3", ["fit-device", data, "--model", "phase_change", "--degree", "3", "-o", out],
                  ["'--degree'", "must be 1 or 2"], output=out)
    bad_out = os.path.join(ck.scratch, "no_such_folder", "fit.toml")
    ck.user_error("output folder missing", ["fit-device", data, "--model", "soft_bounds", "-o", bad_out],
                  [bad_out, "'-o'", "does not exist"], output=bad_out)
    ck.user_error("without --model", ["fit-device", data], ["--model"])


def main(argv):
    if len(argv) != 4:
        print(__doc__)
        return 2
    nvsyn, data_dir, scratch = (os.path.abspath(a) for a in argv[1:])
    shutil.rmtree(scratch, ignore_errors=True)
    os.makedirs(scratch)
    ck = Checker(nvsyn, scratch)
    good_cases(ck, data_dir)
    bad_data_cases(ck, data_dir)
    bad_preset_cases(ck, data_dir)
    bad_hdf5_cases(ck)
    option_cases(ck)
    print(f"{ck.passed} passed, {ck.failed} failed")
    return 1 if ck.failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
