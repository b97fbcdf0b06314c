"""Reference pulse data made with numpy from the soft-bounds law written out
independently of nvsyn:
  dG+ = alpha_p (g_max - G), dG- = -alpha_d (G - g_min), each step times (1 + c N(0, 1)),
as CSV rows or HDF5 columns; and a small model that uses a preset. Shared by the
fit-device checks (check_fit_inputs.py) and the bad-input corpus (tests/bad_inputs).
"""
import h5py
import numpy as np

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
