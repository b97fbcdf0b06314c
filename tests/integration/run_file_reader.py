#!/usr/bin/python3
"""An outside reader (h5py) opens nvsyn's run files.

Runs a model twice with the same seed and once with another, then:
  * tests/record/check_run_file.py checks layout, attributes, units and spike counts
    against the text of `nvsyn summary`;
  * the spike datasets of the two same-seed runs are byte-identical;
  * a different seed gives different spikes.
Usage: run_file_reader.py NVSYN MODEL CHECK_SCRIPT SCRATCH_DIR
"""
import os
import subprocess
import sys

import h5py
import numpy as np

from checklist import report


def run(nvsyn, model, out, *extra):
    subprocess.run([nvsyn, "run", model, "-o", out, "--force", "--quiet", "--duration", "0.5 s", *extra],
                   check=True, stdout=subprocess.DEVNULL)


def spike_bytes(path):
    with h5py.File(path, "r") as f:
        return {pop: (f[f"spikes/{pop}/time"][:].tobytes(), f[f"spikes/{pop}/neuron"][:].tobytes())
                for pop in f["spikes"]}


def main():
    nvsyn, model, check_script, scratch = sys.argv[1:5]
    os.makedirs(scratch, exist_ok=True)
    a, b, c = (os.path.join(scratch, n) for n in ("a.h5", "b.h5", "c.h5"))
    run(nvsyn, model, a)
    run(nvsyn, model, b)
    run(nvsyn, model, c, "--seed", "99")
    summary = os.path.join(scratch, "summary.txt")
    with open(summary, "w") as f:
        subprocess.run([nvsyn, "summary", a], check=True, stdout=f)
    results = []
    check = subprocess.run(["/usr/bin/python3", check_script, a, summary])
    results.append(("layout, units and counts match nvsyn summary", check.returncode == 0))
    sa, sb, sc = spike_bytes(a), spike_bytes(b), spike_bytes(c)
    results.append(("populations recorded", len(sa) > 0 and all(len(t) > 0 for t, _ in sa.values())))
    results.append(("same seed: byte-identical spikes", sa == sb))
    results.append(("other seed: different spikes", sa != sc))
    with h5py.File(a, "r") as f:
        results.append(("status complete", f.attrs["status"] == "complete"))
        results.append(("seed stored", int(f.attrs["seed"]) > 0))
        results.append(("model text stored", "[simulation]" in f.attrs["model"]))
        t = f["spikes/exc/time"][:]
        results.append(("spike times ascending within [0, 0.5 s)",
                        bool(np.all(np.diff(t) >= 0) and t.min() >= 0 and t.max() < 0.5)))
    return report(results)


if __name__ == "__main__":
    sys.exit(main())
