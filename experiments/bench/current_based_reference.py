#!/usr/bin/python3
"""Our own numpy reference of the current-based benchmark network
(models/benchmarks/current_based_4k.toml): the script a competent user would write
instead of using nvsyn. Clock-driven at dt = 0.1 ms (the benchmark's delay, so a spike
of step n arrives at the start of step n + 1), vectorised over neurons, connectivity in
scipy.sparse CSR, and each step's state advanced with the exact propagator of the
linear equations (Rotter & Diesmann, Biol. Cybern. 81:381, 1999):
    I_x <- I_x e^{-dt/tau_x}
    V   <- v_rest + (V - v_rest) e^{-dt/tau_m} + sum_x (I_x / C) K_x(dt),
    K_x(dt) = (e^{-dt/tau_x} - e^{-dt/tau_m}) / (1/tau_m - 1/tau_x).
Threshold crossings are detected on the grid (at most dt late). Parameters are those of
the model file; keep the two in step.

Usage: current_based_reference.py [--duration 1.0] [--seed 1] [--scale 1.0]
Prints one line of key=value pairs: neurons, synapses, steps, spikes, rate_hz, cv_isi,
build_s, wall_s (simulation loop only), wall_per_model_s.
"""
import argparse
import time

import numpy as np
import scipy.sparse as sp

DT = 1e-4          # s
TAU_M = 20e-3      # s
C = 250e-12        # F
V_REST = -49e-3    # V
V_TH = -50e-3      # V
V_RESET = -60e-3   # V
T_REF = 5e-3       # s
TAU_E, TAU_I = 5e-3, 10e-3  # s
W_E, W_I = 20.25e-12, -112.5e-12  # A
P = 0.02


def random_csr(n_pre, n_post, p, weight, rng, first_pre):
    """Bernoulli(p) connections from pre (rows) to post (columns), as CSR; row j is
    neuron first_pre + j of the network, and no neuron connects to itself."""
    m = sp.random(n_pre, n_post, density=p, format="coo", random_state=rng, data_rvs=lambda k: np.full(k, weight))
    keep = m.row + first_pre != m.col
    return sp.csr_matrix((m.data[keep], (m.row[keep], m.col[keep])), shape=(n_pre, n_post))


def kernel(tau_x):
    return (np.exp(-DT / tau_x) - np.exp(-DT / TAU_M)) / (1 / TAU_M - 1 / tau_x)


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--duration", type=float, default=1.0, help="model time, s")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--scale", type=float, default=1.0, help="network size relative to 4,000 neurons")
    args = ap.parse_args()
    rng = np.random.default_rng(args.seed)
    n = int(round(4000 * args.scale))
    n_exc = int(round(0.8 * n))

    t0 = time.perf_counter()
    # One matrix per source population, rows = presynaptic neuron, columns = all targets.
    exc = random_csr(n_exc, n, P, W_E, rng, first_pre=0)
    inh = random_csr(n - n_exc, n, P, W_I, rng, first_pre=n_exc)
    build_s = time.perf_counter() - t0

    v = rng.uniform(V_RESET, V_TH - 1e-5, n)
    i_e = np.zeros(n)
    i_i = np.zeros(n)
    refractory_left = np.zeros(n, dtype=np.int64)
    ref_steps = int(round(T_REF / DT))
    decay_m, decay_e, decay_i = np.exp(-DT / TAU_M), np.exp(-DT / TAU_E), np.exp(-DT / TAU_I)
    k_e, k_i = kernel(TAU_E) / C, kernel(TAU_I) / C
    steps = int(round(args.duration / DT))
    spike_steps, spike_ids = [], []

    def deliver(matrix, ids):
        """Sum of the weights of the given presynaptic rows, per target (a sparse row gather)."""
        if ids.size == 0:
            return None
        return np.asarray(matrix[ids].sum(axis=0)).ravel()

    t0 = time.perf_counter()
    fired = np.zeros(0, dtype=np.int64)
    for step in range(steps):
        # Spikes of the previous step arrive now (delay = dt).
        add = deliver(exc, fired[fired < n_exc])
        if add is not None:
            i_e += add
        add = deliver(inh, fired[fired >= n_exc] - n_exc)
        if add is not None:
            i_i += add
        held = refractory_left > 0
        v_next = V_REST + (v - V_REST) * decay_m + i_e * k_e + i_i * k_i
        v = np.where(held, V_RESET, v_next)
        i_e *= decay_e
        i_i *= decay_i
        refractory_left[held] -= 1
        fired = np.flatnonzero(v >= V_TH)
        if fired.size:
            v[fired] = V_RESET
            refractory_left[fired] = ref_steps
            spike_steps.append(np.full(fired.size, step))
            spike_ids.append(fired)
    wall_s = time.perf_counter() - t0

    ids = np.concatenate(spike_ids) if spike_ids else np.zeros(0, dtype=np.int64)
    times = (np.concatenate(spike_steps) + 1) * DT if spike_steps else np.zeros(0)
    cvs = []
    for j in np.unique(ids):
        isi = np.diff(times[ids == j])
        if isi.size >= 2:
            cvs.append(isi.std() / isi.mean())
    print(f"neurons={n} synapses={exc.nnz + inh.nnz} steps={steps} spikes={ids.size} "
          f"rate_hz={ids.size / n / args.duration:.4f} cv_isi={np.mean(cvs) if cvs else 0.0:.4f} "
          f"build_s={build_s:.3f} wall_s={wall_s:.3f} wall_per_model_s={wall_s / args.duration:.3f}")


if __name__ == "__main__":
    main()
