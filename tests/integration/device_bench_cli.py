#!/usr/bin/python3
"""`nvsyn device` and `nvsyn map-weights` from the outside: files read with h5py.

Checks, for the device-bench file:
  * layout, attributes, shapes and `units` (src/record/LAYOUT.md);
  * statistics recomputed here with numpy from the stored curves, following the
    definitions in src/devices/characterisation_statistics.hpp, equal the stored ones;
  * the printed table shows the stored values;
  * a preset given as a path; no down ramp for a set-only (phase-change) device;
and for the weight-mapping file:
  * targets equal the CSV values in amperes; error statistics recomputed from /read;
and that bad command lines exit with status 2, a message naming the option or the
file position, and nothing left at the output path.
Usage: device_bench_cli.py NVSYN SOURCE_ROOT SCRATCH_DIR
"""
import glob
import os
import subprocess
import sys

import h5py
import numpy as np

results = []


def check(name, ok):
    results.append((name, bool(ok)))


def run(args, **kw):
    return subprocess.run(args, capture_output=True, text=True, **kw)


def first_crossing(curve, level, rising):
    """Fractional pulse number where `curve` first reaches `level` (linear in between)."""
    hit = curve >= level if rising else curve <= level
    i = int(np.argmax(hit))
    if not hit[i]:
        return np.nan
    if i == 0:
        return 0.0
    return (i - 1) + (level - curve[i - 1]) / (curve[i] - curve[i - 1])


def bench_checks(nvsyn, scratch):
    out = os.path.join(scratch, "bench.h5")
    proc = run([nvsyn, "device", "resistive_bidirectional", "-o", out, "--devices", "30", "--cycles", "4",
                "--read-delays", "1 s,10 s,100 s,1000 s", "--seed", "5"])
    check("nvsyn device exits 0", proc.returncode == 0)
    if proc.returncode != 0:
        print(proc.stderr)
        return
    with h5py.File(out, "r") as f:
        check("layout nvsyn-device-bench v1",
              f.attrs["layout"] == "nvsyn-device-bench" and int(f.attrs["layout_version"]) == 1)
        check("seed and preset stored", int(f.attrs["seed"]) == 5 and f.attrs["preset"] == "resistive_bidirectional"
              and "[device]" in f.attrs["preset_text"] and f.attrs["device_model"] == "exponential_saturation")
        pr = f["protocol"]
        n = int(pr.attrs["pulses"])
        check("protocol attributes", int(pr.attrs["devices"]) == 30 and int(pr.attrs["cycles"]) == 4
              and n == 128 and int(pr.attrs["gradual_depression"]) == 1)
        check("read delays stored in s", np.allclose(pr["read_delays"][:], [1, 10, 100, 1000])
              and pr["read_delays"].attrs["units"] == "s")
        up, down = f["curves/up"][:], f["curves/down"][:]
        check("curve shapes [device, cycle, pulse]", up.shape == (30, 4, n + 1) and down.shape == up.shape)
        check("curve units S", f["curves/up"].attrs["units"] == "S" and f["curves/down"].attrs["units"] == "S")
        check("drift shapes [level, device, delay]", f["drift/conductance"].shape == (3, 30, 4)
              and f["drift/conductance"].attrs["units"] == "S" and f["drift/nu"].shape == (3, 30))
        used = f["curves/used"][:].astype(bool)
        check("used = working devices", np.array_equal(used, f["curves/health"][:] == 0))

        s = {name: f["summary"][name][()] for name in f["summary"]}
        units = {name: f["summary"][name].attrs["units"] for name in f["summary"]}
        check("summary units", units["window"] == "S" and units["levels"] == "1" and units["energy_per_pulse"] == "J")
        check("summary counts", int(f["summary"].attrs["devices_used"]) == used.sum())

        # Independent recomputation from the curves (definitions in characterisation_statistics.hpp).
        u, d = up[used], down[used]
        ubar, dbar = u.mean(axis=(0, 1)), d.mean(axis=(0, 1))
        g_high, g_low = ubar[-1], dbar[-1]
        w = g_high - g_low
        a, b = g_low + 0.1 * w, g_low + 0.9 * w
        n_up = first_crossing(ubar, b, True) - first_crossing(ubar, a, True)
        n_down = first_crossing(dbar, a, False) - first_crossing(dbar, b, False)
        step_up, step_down = 0.8 * w / n_up, 0.8 * w / n_down
        close = lambda x, y: np.isclose(x, y, rtol=1e-9, atol=0)
        check("g_high, g_low, window", close(s["g_high"], g_high) and close(s["g_low"], g_low) and close(s["window"], w))
        check("levels", close(s["levels"], (n_up + n_down) / 1.6))
        check("asymmetry", close(s["asymmetry"], (step_up - step_down) / (step_up + step_down)))
        # c2c step spread: steps wholly inside the band, variance across cycles, pooled.
        steps_up = [i for i in range(1, n + 1) if ubar[i - 1] >= a and ubar[i] <= b]
        steps_down = [i for i in range(1, n + 1) if dbar[i - 1] <= b and dbar[i] >= a]
        variances, magnitudes = [], []
        for curves, steps in ((u, steps_up), (d, steps_down)):
            delta = curves[:, :, steps] - curves[:, :, [i - 1 for i in steps]]
            variances.append(delta.var(axis=1, ddof=1).ravel())
            magnitudes.append(np.abs(delta).ravel())
        c2c = np.sqrt(np.concatenate(variances).mean()) / np.concatenate(magnitudes).mean()
        check("c2c_step_spread", close(s["c2c_step_spread"], c2c))
        g_dev = u[:, :, -1].mean(axis=1)
        check("d2d_g_high_spread", close(s["d2d_g_high_spread"], g_dev.std(ddof=1) / g_dev.mean()))
        # Drift exponents: minus the log-log slope over delays >= drift_t0 (1 s by default).
        g = f["drift/conductance"][:]
        x = np.log(pr["read_delays"][:])
        nu = f["drift/nu"][:]
        j = int(np.flatnonzero(used)[0])
        slope = np.polyfit(x, np.log(g[1, j, :]), 1)[0]
        check("drift exponent of one device", np.isclose(nu[1, j], -slope, rtol=1e-7, atol=1e-12))
        check("drift_nu_mean", close(s["drift_nu_mean"], np.nanmean(nu[:, used])))

        table = {}
        for line in proc.stdout.splitlines():
            parts = line.split()
            if len(parts) >= 2 and parts[0] in s:
                table[parts[0]] = parts[1]
        check("printed levels and asymmetry match the file",
              table.get("levels") == f"{s['levels']:.4g}" and table.get("asymmetry") == f"{s['asymmetry']:.4g}")

    pcm = os.path.join(scratch, "pcm.h5")
    preset_path = os.path.join(ROOT, "models", "devices", "phase_change.toml")
    proc = run([nvsyn, "device", preset_path, "-o", pcm, "--devices", "10", "--cycles", "2"])
    check("preset given as a path", proc.returncode == 0)
    if proc.returncode == 0:
        with h5py.File(pcm, "r") as f:
            check("phase change: no down ramp", "down" not in f["curves"]
                  and int(f["protocol"].attrs["gradual_depression"]) == 0)
            check("phase change: asymmetry not defined, with a note",
                  np.isnan(f["summary/asymmetry"][()]) and "cannot depress gradually" in f["summary"].attrs["notes"])


def mapping_checks(nvsyn, scratch):
    out = os.path.join(scratch, "mapping.h5")
    weights = os.path.join(ROOT, "models", "weights_example.csv")
    proc = run([nvsyn, "map-weights", weights, "--preset", "finite_levels", "--weight-max", "0.2 nA",
                "--times", "0 s,1 h,10 yr", "-o", out, "--seed", "3"])
    check("nvsyn map-weights exits 0", proc.returncode == 0)
    if proc.returncode != 0:
        print(proc.stderr)
        return
    target = np.loadtxt(weights, delimiter=",", comments="#") * 1e-9
    with h5py.File(out, "r") as f:
        check("mapping layout", f.attrs["layout"] == "nvsyn-weight-mapping" and int(f.attrs["layout_version"]) == 1)
        check("targets in A", np.allclose(f["target"][:], target, rtol=1e-12, atol=0)
              and f["target"].attrs["units"] == "A")
        read = f["read"][:]
        check("read shape [time, row, column]", read.shape == (3,) + target.shape and f["read"].attrs["units"] == "A")
        check("times in s", np.allclose(f["time"][:], [0, 3600, 10 * 365.25 * 86400]))
        # finite_levels: 32 levels over 10 uS, gain 0.2 nA / 10 uS: half a step is 3.125 pA.
        half_step = 0.5 * 0.2e-9 / 32
        check("programmed within half a step", np.all(np.abs(f["programmed"][:] - target) <= half_step * (1 + 1e-9)))
        err = read[1] - target
        check("rms recomputed", np.isclose(f["errors/read/rms"][1], np.sqrt(np.mean(err ** 2)), rtol=1e-12))
        check("percentiles recomputed", np.allclose(
            f["errors/read/percentiles"][1], np.percentile(err, 100 * f["errors/percentile_levels"][:]), rtol=1e-12))
        check("all succeeded", int(f.attrs["succeeded"]) == target.size)
    check("table printed", "rms(drift)" in proc.stdout and "10 yr" in proc.stdout)


def bad_input_checks(nvsyn, scratch):
    out = os.path.join(scratch, "bad.h5")
    bad_csv = os.path.join(scratch, "bad_weights.csv")
    with open(bad_csv, "w") as fh:
        fh.write("# unit: nA\n0.1, 0.2\n0.3, zz\n")
    weights = os.path.join(ROOT, "models", "weights_example.csv")
    mw = [nvsyn, "map-weights", weights, "--preset", "finite_levels", "-o", out]
    cases = [
        ("unknown preset", [nvsyn, "device", "no_such_preset", "-o", out], ["device preset 'no_such_preset' not found"]),
        ("read delay not a time", [nvsyn, "device", "finite_levels", "-o", out, "--read-delays", "1 s,5 nS"],
         ["'--read-delays'", "is a conductance, expected a time"]),
        ("read delays out of order", [nvsyn, "device", "finite_levels", "-o", out, "--read-delays", "10 s,1 s"],
         ["'--read-delays': read delays must be given in increasing order"]),
        ("zero devices", [nvsyn, "device", "finite_levels", "-o", out, "--devices", "0"],
         ["'--devices': must be at least 1"]),
        ("missing output folder", [nvsyn, "device", "finite_levels", "-o", os.path.join(scratch, "nope", "b.h5")],
         ["'-o'", "does not exist"]),
        ("gain and weight_max", mw + ["--gain", "5 uV", "--weight-max", "0.2 nA"], ["give exactly one of --weight-max"]),
        ("neither gain nor weight_max", mw, ["give exactly one of --weight-max"]),
        ("weight_max of a wrong dimension", mw + ["--weight-max", "0.2 mV"], ["'--weight-max'"]),
        ("unknown layout", mw + ["--weight-max", "0.2 nA", "--layout", "triple"], ["'--layout'", "unknown layout"]),
        ("bad weights file", [nvsyn, "map-weights", bad_csv, "--preset", "finite_levels", "--weight-max", "0.2 nA",
                              "-o", out], [f"{bad_csv}:3:6:", "row 2, column 2", "'zz' is not a number"]),
        ("times out of order", mw + ["--weight-max", "0.2 nA", "--times", "1 h,0 s"], ["'--times'"]),
    ]
    for name, args, texts in cases:
        proc = run(args)
        leftovers = glob.glob(glob.escape(out) + "*")
        ok = proc.returncode == 2 and all(t in proc.stderr for t in texts) and not leftovers \
            and "internal error" not in proc.stderr
        if not ok:
            print(f"  {name}: exit {proc.returncode}, stderr: {proc.stderr.strip()}, leftovers {leftovers}")
        check(f"bad input: {name}", ok)


def main():
    global ROOT
    nvsyn, ROOT, scratch = sys.argv[1:4]
    os.makedirs(scratch, exist_ok=True)
    for old in glob.glob(os.path.join(scratch, "*.h5*")):
        os.remove(old)
    bench_checks(nvsyn, scratch)
    mapping_checks(nvsyn, scratch)
    bad_input_checks(nvsyn, scratch)
    for name, ok in results:
        print(f"{'ok  ' if ok else 'FAIL'} {name}")
    failed = sum(not ok for _, ok in results)
    print(f"{len(results) - failed} passed, {failed} failed")
    return 1 if failed else 0


ROOT = ""
if __name__ == "__main__":
    sys.exit(main())
