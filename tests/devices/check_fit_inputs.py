#!/usr/bin/python3
"""nvsyn fit-device end to end on good data: a preset fitted to reference data
recovers the parameters they were made with and loads in a model; HDF5 data fit as
the CSV does; data of another model are judged poor. (Malformed data files and
presets are in the bad-input corpus, tests/bad_inputs.)

Usage: check_fit_inputs.py NVSYN SCRATCH_DIR

Reference data are made with numpy from the soft-bounds law written out
independently (reference_pulse_data.py). The last line printed is "N passed, M failed".
"""
import os
import shutil
import subprocess
import sys
import tomllib

from reference_pulse_data import MODEL_TEMPLATE, TRUTH, h5_columns, soft_bounds_reads, write_csv, write_h5

TIMEOUT_S = 120


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


def to_si(value):
    """ "12.3 uS" -> 1.23e-5; numbers pass through."""
    if not isinstance(value, str):
        return float(value)
    number, unit = value.split()
    prefixes = {"f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "m": 1e-3, "": 1.0, "k": 1e3}
    return float(number) * prefixes[unit[:-1]]


def good_cases(ck):
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


def main(argv):
    if len(argv) != 3:
        print(__doc__)
        return 2
    nvsyn, scratch = (os.path.abspath(a) for a in argv[1:])
    shutil.rmtree(scratch, ignore_errors=True)
    os.makedirs(scratch)
    ck = Checker(nvsyn, scratch)
    good_cases(ck)
    print(f"{ck.passed} passed, {ck.failed} failed")
    return 1 if ck.failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
