#!/usr/bin/python3
"""An outside reader (h5py) checks the /devices part of a run file.

Runs models/demo_devices.toml briefly and checks, against the model and the
layout documented in src/record/LAYOUT.md: one /devices group per device pathway,
array lengths (devices = synapses x devices per synapse), units, health codes, that
conductances lie in the preset's range (reads with drift can only fall), and that
initial weights are within the verify tolerance of their targets except where
program-and-verify reported a failure.
Usage: device_run_file.py NVSYN MODEL SCRATCH_DIR
"""
import os
import subprocess
import sys

import h5py
import numpy as np

from checklist import report


def main():
    nvsyn, model, scratch = sys.argv[1:4]
    os.makedirs(scratch, exist_ok=True)
    out = os.path.join(scratch, "devices.h5")
    subprocess.run([nvsyn, "run", model, "-o", out, "--force", "--quiet", "--duration", "0.3 s"],
                   check=True, stdout=subprocess.DEVNULL)
    results = []
    with h5py.File(out, "r") as f:
        results.append(("one device pathway", list(f["devices"].keys()) == ["exc_exc"]))
        g = f["devices/exc_exc"]
        synapses = f["pathways/exc_exc/pre"].shape[0]
        per = int(g.attrs["devices_per_synapse"])
        results.append(("differential layout on phase-change", g.attrs["layout"] == "differential" and per == 2
                        and g.attrs["device_model"] == "phase_change"))
        for name, units, length in [("conductance", "S", synapses * per), ("programmed", "S", synapses * per),
                                    ("energy", "J", synapses * per), ("requested", "A", synapses),
                                    ("realised", "A", synapses), ("target_weight", "A", synapses),
                                    ("initial_weight", "A", synapses)]:
            results.append((f"{name}: {length} values in {units}",
                            g[name].shape == (length,) and g[name].attrs["units"] == units))
        results.append(("pulse counts and health", g["pulses"].shape == (synapses * per,)
                        and set(np.unique(g["health"][:])) <= {0, 1, 2, 3}))
        conductance, programmed = g["conductance"][:], g["programmed"][:]
        results.append(("drift only lowers conductance", bool(np.all(conductance <= programmed + 1e-18))))
        results.append(("conductance within [0, 25 uS x 1.5]", bool(conductance.min() >= 0
                                                                      and conductance.max() <= 37.5e-6)))
        target, initial = g["target_weight"][:], g["initial_weight"][:]
        # Program-and-verify stops when a noisy *read* is within tolerance (half the
        # preset's first mean increment, 1.6 uS); the true weight may differ from that
        # read by the read noise of both devices (white, relative sd 0.005 in the
        # preset; no 1/f noise right after programming). Allow 5 of those sd.
        gain = float(g.attrs["gain"])
        pairs = programmed.reshape(-1, 2)
        read_sd = 0.005 * np.sqrt(pairs[:, 0] ** 2 + pairs[:, 1] ** 2)
        tolerance = gain * (0.5 * 1.6e-6 + 5 * read_sd)
        error = np.abs(initial - target)
        failed = int(g.attrs["initial_failed"])
        results.append((f"initial weights within tolerance except {failed} reported failures",
                        int(np.sum(error > tolerance * (1 + 1e-9))) <= failed))
        results.append(("static run: nothing requested", float(np.abs(g["requested"][:]).sum()) == 0.0))
    return report(results)


if __name__ == "__main__":
    sys.exit(main())
