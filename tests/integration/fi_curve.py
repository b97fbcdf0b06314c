#!/usr/bin/python3
"""f-I curve of the LIF neuron: nvsyn against an independent Python evaluation.

nvsyn simulates 10 neurons, each under its own constant current. The expected
firing rate is computed here twice, without any nvsyn code:
  1. the closed form r = 1 / (t_ref + tau_m ln((R I + E_L - V_reset) / (R I + E_L - V_th)))
     (Gerstner & Kistler, Spiking Neuron Models, 2002, ch. 4), with numpy;
  2. the time to threshold found by scipy.optimize.brentq on the membrane
     trajectory V(t) = E_L + R I + (V_reset - E_L - R I) exp(-t / tau_m).
Usage: fi_curve.py NVSYN SCRATCH_DIR
"""
import os
import subprocess
import sys

import h5py
import numpy as np
from scipy.optimize import brentq

TAU_M, C, E_L, V_TH, V_RESET, T_REF = 20e-3, 250e-12, -65e-3, -50e-3, -70e-3, 2e-3
R = TAU_M / C
# Rheobase is (V_TH - E_L) / R = 0.1875 nA: the list brackets it closely on both sides.
CURRENTS_NA = [0.05, 0.1874, 0.1876, 0.19, 0.2, 0.25, 0.4, 0.6, 1.0, 2.0]
DURATION = 3.0


def write_model(path):
    lines = [
        "[simulation]", f'duration = "{DURATION} s"', "seed = 5", "",
        "[population.cells]", f"size = {len(CURRENTS_NA)}",
        f'tau_m = "{TAU_M * 1e3} ms"', f'capacitance = "{C * 1e12} pF"',
        f'v_rest = "{E_L * 1e3} mV"', f'v_threshold = "{V_TH * 1e3} mV"',
        f'v_reset = "{V_RESET * 1e3} mV"', f'refractory = "{T_REF * 1e3} ms"',
        f'v_init = "{V_RESET * 1e3} mV"', "",
    ]
    for i, current in enumerate(CURRENTS_NA):
        lines += [f"[input.clamp{i}]", 'kind = "current"', 'target = "cells"',
                  f"neurons = [{i}]", f'amplitude = "{current} nA"', ""]
    with open(path, "w") as f:
        f.write("\n".join(lines))


def expected_rate_closed_form(current):
    drive = R * current + E_L
    if drive <= V_TH:
        return 0.0
    return 1.0 / (T_REF + TAU_M * np.log((drive - V_RESET) / (drive - V_TH)))


def expected_rate_root(current):
    v_inf = E_L + R * current
    if v_inf <= V_TH:
        return 0.0
    v = lambda t: v_inf + (V_RESET - v_inf) * np.exp(-t / TAU_M) - V_TH
    t_cross = brentq(v, 0.0, 50 * TAU_M, xtol=1e-16, rtol=4 * np.finfo(float).eps)
    return 1.0 / (T_REF + t_cross)


def main():
    nvsyn, scratch = sys.argv[1], sys.argv[2]
    os.makedirs(scratch, exist_ok=True)
    model, run = os.path.join(scratch, "fi.toml"), os.path.join(scratch, "fi.h5")
    write_model(model)
    subprocess.run([nvsyn, "run", model, "-o", run, "--force", "--quiet"], check=True, stdout=subprocess.DEVNULL)
    with h5py.File(run, "r") as f:
        times = f["spikes/cells/time"][:]
        neurons = f["spikes/cells/neuron"][:]
    passed = failed = 0
    for i, current_na in enumerate(CURRENTS_NA):
        current = current_na * 1e-9
        train = np.sort(times[neurons == i])
        closed, root = expected_rate_closed_form(current), expected_rate_root(current)
        if closed == 0.0:
            ok = train.size == 0
            measured = 0.0
        else:
            # Rate from the mean inter-spike interval (every interval is one period).
            measured = 1.0 / np.mean(np.diff(train))
            ok = (train.size > 3 and abs(measured - closed) <= 1e-9 * closed
                  and abs(measured - root) <= 1e-9 * root)
        print(f"I = {current_na:6.4f} nA  nvsyn {measured:12.6f} Hz  closed form {closed:12.6f} Hz  "
              f"brentq {root:12.6f} Hz  {'ok' if ok else 'MISMATCH'}")
        passed, failed = passed + ok, failed + (not ok)
    print(f"{passed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
