#!/usr/bin/python3
"""An outside reader (h5py) checks the learning part of a run file.

Runs models/stdp_pairing.toml and models/competitive_stdp.toml (shortened) and
checks, against the layout in src/record/LAYOUT.md: every logged change adds up to
the difference between final and initial weight; requested and realised totals per
synapse agree with the logged changes; units; periodic samples and snapshots have
the shapes the model asks for; the pathway's rule attribute.
Usage: learning_run_file.py NVSYN MODELS_DIR SCRATCH_DIR
"""
import os
import subprocess
import sys

import h5py
import numpy as np

from checklist import report


def run(nvsyn, model, out, *extra):
    subprocess.run([nvsyn, "run", model, "-o", out, "--force", "--quiet", *extra], check=True, stdout=subprocess.DEVNULL)


def main():
    nvsyn, models, scratch = sys.argv[1:4]
    os.makedirs(scratch, exist_ok=True)
    results = []
    pairing = os.path.join(scratch, "pairing.h5")
    run(nvsyn, os.path.join(models, "stdp_pairing.toml"), pairing)
    with h5py.File(pairing, "r") as f:
        p = f["pathways/learn"]
        changes = f["weights/learn/changes"]
        realised = changes["realised"][:]
        results.append(("rule attribute", p.attrs["rule"] == "pair_stdp"))
        results.append(("changes logged with units", len(realised) > 20 and changes["realised"].attrs["units"] == "A"
                        and changes["time"].attrs["units"] == "s"))
        results.append(("change times ascending", bool(np.all(np.diff(changes["time"][:]) >= 0))))
        initial = p["weight"][0]
        final = p["final_weight"][0]
        results.append(("logged changes add up to final - initial weight",
                        abs((final - initial) - realised.sum()) <= 1e-9 * abs(initial)))
        results.append(("per-synapse totals match the log",
                        abs(p["realised"][0] - realised.sum()) <= 1e-12 * abs(initial)
                        and abs(p["requested"][0] - changes["requested"][:].sum()) <= 1e-12 * abs(initial)))
        results.append(("floating-point weights realise every request",
                        bool(np.allclose(changes["requested"][:], realised, rtol=0, atol=1e-24))))
        results.append(("learning attributes", int(p.attrs["updates"]) == len(realised)))
        samples = f["weights/learn/value"]
        results.append(("periodic samples every 100 ms over 22 s", samples.shape == (220, 1)
                        and samples.attrs["units"] == "A"))
    competitive = os.path.join(scratch, "competitive.h5")
    run(nvsyn, os.path.join(models, "competitive_stdp.toml"), competitive, "--duration", "250 s")
    with h5py.File(competitive, "r") as f:
        snaps = f["weights/exc/snapshots"]
        results.append(("three snapshots of 1000 weights (the one at 299 s lies beyond the run)",
                        snaps["value"].shape == (3, 1000) and list(snaps["time"][:]) == [0.0, 100.0, 200.0]))
        w = snaps["value"][:]
        results.append(("snapshot weights within [0, w_max]", bool(w.min() >= 0 and w.max() <= 12e-12 * (1 + 1e-6))))
        results.append(("weights spread towards the bounds as learning goes on",
                        np.std(w[2]) > np.std(w[0])))
    return report(results)


if __name__ == "__main__":
    sys.exit(main())
