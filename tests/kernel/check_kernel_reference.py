#!/usr/bin/python3
"""The kernel against references stored from an earlier kernel (reference/README.md).

Usage: check_kernel_reference.py NVSYN SCRATCH_DIR [--write]

1. Feed-forward network (reference/feed_forward.toml): no recurrence, so every spike
   time is a deterministic function of the input; each neuron's spike train must
   equal the stored one, spike for spike, within 1e-9 s.
2. The current-based benchmark network (models/benchmarks/current_based_4k.toml):
   recurrent and chaotic, so individual spikes diverge with any change of rounding;
   its mean rate and mean CV of inter-spike intervals over 1 s must stay within 2%
   of the stored values.
--write stores new references (only when a change of results is intended and
explained in the commit message).
The last line printed is "N passed, M failed".
"""
import json
import os
import subprocess
import sys
from pathlib import Path

import h5py
import numpy as np

HERE = Path(__file__).resolve().parent
REFERENCE = HERE / "reference"
REPO = HERE.parents[1]
SPIKE_TOLERANCE_S = 1e-9
STATISTIC_TOLERANCE = 0.02


def run(nvsyn, model, out):
    if os.path.exists(out):
        os.remove(out)
    subprocess.run([nvsyn, "run", str(model), "-o", out, "-q"], check=True, stdout=subprocess.DEVNULL)
    with h5py.File(out) as f:
        return {pop: (f[f"spikes/{pop}/time"][:], f[f"spikes/{pop}/neuron"][:]) for pop in f["spikes"]}, \
               {pop: int(f[f"populations/{pop}"].attrs["size"]) for pop in f["populations"]}


def trains(times, neurons):
    """Spike times per neuron, each sorted."""
    order = np.lexsort((times, neurons))
    t, n = times[order], neurons[order]
    cuts = np.flatnonzero(np.diff(n)) + 1
    return {int(block[0]): tt for block, tt in zip(np.split(n, cuts), np.split(t, cuts)) if block.size}


def statistics(spikes, sizes, duration):
    """Mean rate (Hz) over all neurons, and mean CV of ISIs over neurons with >= 3 spikes."""
    total = sum(t.size for t, _ in spikes.values())
    cvs = []
    for times, neurons in spikes.values():
        for train in trains(times, neurons).values():
            isi = np.diff(train)
            if isi.size >= 2:
                cvs.append(isi.std() / isi.mean())
    return total / sum(sizes.values()) / duration, float(np.mean(cvs))


def main(argv):
    if len(argv) not in (3, 4):
        print(__doc__)
        return 2
    nvsyn, scratch = argv[1], Path(argv[2])
    write = len(argv) == 4 and argv[3] == "--write"
    scratch.mkdir(parents=True, exist_ok=True)
    passed = failed = 0

    def report(name, problems):
        nonlocal passed, failed
        print(("FAIL " if problems else "ok   ") + name + (": " + "; ".join(problems[:10]) if problems else ""))
        passed, failed = passed + (not problems), failed + bool(problems)

    spikes, _ = run(nvsyn, REFERENCE / "feed_forward.toml", str(scratch / "feed_forward.h5"))
    stored_path = REFERENCE / "feed_forward_spikes.npz"
    if write:
        np.savez_compressed(stored_path, **{f"{p}_{k}": v for p, (t, n) in spikes.items()
                                            for k, v in (("time", t), ("neuron", n))})
    stored = np.load(stored_path)
    for pop, (times, neurons) in spikes.items():
        problems = []
        got, want = trains(times, neurons), trains(stored[f"{pop}_time"], stored[f"{pop}_neuron"])
        if set(got) != set(want):
            problems.append(f"neurons that fired differ: {sorted(set(got) ^ set(want))[:5]}")
        for j in sorted(set(got) & set(want)):
            if got[j].size != want[j].size:
                problems.append(f"neuron {j}: {got[j].size} spikes, reference {want[j].size}")
            elif got[j].size and np.max(np.abs(got[j] - want[j])) > SPIKE_TOLERANCE_S:
                problems.append(f"neuron {j}: spike times differ by up to {np.max(np.abs(got[j] - want[j])):.3g} s")
        report(f"feed-forward '{pop}': {times.size} spikes equal the reference within {SPIKE_TOLERANCE_S:g} s", problems)

    spikes, sizes = run(nvsyn, REPO / "models" / "benchmarks" / "current_based_4k.toml", str(scratch / "cuba.h5"))
    rate, cv = statistics(spikes, sizes, 1.0)
    stats_path = REFERENCE / "current_based_4k_statistics.json"
    if write:
        stats_path.write_text(json.dumps({"rate_hz": rate, "cv_isi": cv}, indent=2) + "\n")
    want = json.loads(stats_path.read_text())
    problems = []
    for name, value in (("rate_hz", rate), ("cv_isi", cv)):
        if abs(value - want[name]) > STATISTIC_TOLERANCE * want[name]:
            problems.append(f"{name} {value:.4f}, reference {want[name]:.4f}")
    report(f"benchmark network: rate {rate:.4f} Hz, CV {cv:.4f} within 2% of the reference", problems)
    print(f"{passed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
