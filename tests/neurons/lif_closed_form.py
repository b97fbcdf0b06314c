#!/usr/bin/python3
"""LIF state against the exact solution evaluated in 60-digit arithmetic (mpmath).

The neuron is nvsyn's LifBank, driven by lif_probe (tests/neurons/lif_probe.cpp).
The reference is the exact integration of the current-based LIF neuron with
exponential synaptic currents (Rotter & Diesmann, Biol. Cybern. 81:381-402, 1999,
exact integration):
    I_x(s) = I_x(0) e^{-s/tau_x}
    V(s)   = V_inf + (V(0) - V_inf) e^{-s/tau_m} + sum_x I_x(0) K_x(s) / C,
    K_x(s) = (e^{-s/tau_x} - e^{-s/tau_m}) / (1/tau_m - 1/tau_x),  s e^{-s/tau_m} if tau_x = tau_m,
    V_inf  = v_rest + (tau_m / C) I_bias,
evaluated here directly in that form (the difference of exponentials, which needs
the 60 digits when the time constants are nearly equal), independently of the
overflow-free form nvsyn uses.

Covered: every ordering of tau_m and the synaptic time constants (tau_exc = 5 ms,
tau_inh = 10 ms): tau_m << tau_syn (1 us, 0.1 ms), equal to either, nearly equal
(relative differences +-1e-6, +-1e-10, 1e-14), in between, and tau_m >> tau_syn
(20 ms, 1 s, 100 s); one advance of 0.1 ms to 100 years after an input, and
sequences of inputs separated by idle times of 1 ms to 100 years.

Tolerance: every value must be finite and within 1e-12 relative of the reference.
"Relative" is measured against
  * currents: |I_ref|;
  * V: the sum of the magnitudes of the closed form's terms,
    |V_inf| + |V(0) - V_inf| e^{-s/tau_m} + sum_x |I_x(0) K_x(s)| / C,
    the size of the error that rounding the terms of this sum can make (V itself
    can pass through zero where its terms cancel);
and values whose reference magnitude is below 1e-280 times the scale of the state
(the largest input current; for V, the largest of |v_rest|, |v_init|, |V_inf| and
max|w| max(tau) / C) are compared with that floor instead: a value that has decayed
by more than 280 decades is only required to be correct to 1e-292 of the scale,
which also admits the reduced precision of subnormal doubles.
Usage: lif_closed_form.py LIF_PROBE
"""
import math
import subprocess
import sys

import mpmath as mp

mp.mp.dps = 60

TAU_EXC, TAU_INH = 5e-3, 10e-3
YEAR = 365.25 * 86400.0
TAU_M = [
    ("tau_m << tau_syn (1 us)", 1e-6),
    ("tau_m << tau_syn (0.1 ms)", 1e-4),
    ("tau_m == tau_exc", TAU_EXC),
    ("tau_m == tau_inh", TAU_INH),
    ("tau_m = tau_exc (1 + 1e-6)", TAU_EXC * (1 + 1e-6)),
    ("tau_m = tau_exc (1 - 1e-6)", TAU_EXC * (1 - 1e-6)),
    ("tau_m = tau_exc (1 + 1e-10)", TAU_EXC * (1 + 1e-10)),
    ("tau_m = tau_exc (1 - 1e-10)", TAU_EXC * (1 - 1e-10)),
    ("tau_m = tau_inh (1 + 1e-10)", TAU_INH * (1 + 1e-10)),
    ("tau_m = tau_exc (1 + 1e-14)", TAU_EXC * (1 + 1e-14)),
    ("tau_exc < tau_m < tau_inh", 7e-3),
    ("tau_m >> tau_syn (20 ms)", 20e-3),
    ("tau_m >> tau_syn (1 s)", 1.0),
    ("tau_m >> tau_syn (100 s)", 100.0),
]
# (label, capacitance F, v_rest V, v_init V, R * bias V); the bias current is chosen
# per tau_m so that it raises V_inf by the same 5 mV: the neuron never fires.
SETTINGS = [
    ("synaptic part only", 250e-12, 0.0, 0.0, 0.0),
    ("with rest, start and bias", 250e-12, -65e-3, -70e-3, 5e-3),
]


def bias_current(tau_m, setting):
    _, c, _, _, drive = setting
    return drive * c / tau_m

W_EXC, W_INH = 0.5e-9, -1.5e-9
IDLE = [1e-3, 1e-2, 0.1, 1.0, 10.0, 100.0, 1e4, 1e6, 1e8, 100 * YEAR]
SINGLE = sorted({10 ** (k / 4) for k in range(-16, 38)} | set(IDLE))  # 0.1 ms .. 100 years
REL_TOL = 1e-12
FLOOR = 1e-280


def kernel(s, tau_m, tau_x):
    if tau_x == tau_m:
        return s * mp.exp(-s / tau_m)
    return (mp.exp(-s / tau_x) - mp.exp(-s / tau_m)) / (1 / tau_m - 1 / tau_x)


class Reference:
    """The exact state, propagated in 60 digits from the same double inputs."""

    def __init__(self, tau_m, c, v_rest, v_init, bias):
        self.tau_m, self.c = mp.mpf(tau_m), mp.mpf(c)
        self.v_inf = mp.mpf(v_rest) + self.tau_m / self.c * mp.mpf(bias)
        self.v, self.i_exc, self.i_inh, self.t = mp.mpf(v_init), mp.mpf(0), mp.mpf(0), mp.mpf(0)
        self.v_size = abs(self.v)

    def advance(self, t):
        s = mp.mpf(t) - self.t
        if s <= 0:
            return
        em = mp.exp(-s / self.tau_m)
        k_exc = kernel(s, self.tau_m, mp.mpf(TAU_EXC))
        k_inh = kernel(s, self.tau_m, mp.mpf(TAU_INH))
        terms = [self.v_inf, (self.v - self.v_inf) * em, self.i_exc * k_exc / self.c, self.i_inh * k_inh / self.c]
        self.v = sum(terms)
        self.v_size = sum(abs(x) for x in terms)
        self.i_exc *= mp.exp(-s / TAU_EXC)
        self.i_inh *= mp.exp(-s / TAU_INH)
        self.t = mp.mpf(t)


def script_single(tau_m, setting, s):
    _, c, v_rest, v_init, _ = setting
    bias = bias_current(tau_m, setting)
    return [f"params {tau_m!r} {TAU_EXC!r} {TAU_INH!r} {c!r} {v_rest!r} {v_init!r} {bias!r}",
            f"exc 0 {W_EXC!r}", f"inh 0 {W_INH!r}", f"sample {s!r}"]


def script_sequence(tau_m, setting):
    _, c, v_rest, v_init, _ = setting
    bias = bias_current(tau_m, setting)
    lines = [f"params {tau_m!r} {TAU_EXC!r} {TAU_INH!r} {c!r} {v_rest!r} {v_init!r} {bias!r}"]
    t = 0.0
    for d in IDLE + IDLE[::-1]:
        lines += [f"exc {t!r} {W_EXC!r}", f"inh {t!r} {W_INH!r}"]
        t += d
        lines.append(f"sample {t!r}")
    return lines


def check(label, tau_m, setting, lines, output, problems):
    """Replays `lines` on the reference and compares each sample of `output`."""
    _, c, v_rest, v_init, _ = setting
    bias = bias_current(tau_m, setting)
    ref = None
    samples = iter(output)
    current_scale = max(abs(W_EXC), abs(W_INH))
    v_scale = max(abs(v_rest), abs(v_init), abs(v_rest + tau_m / c * bias),
                  current_scale * max(tau_m, TAU_EXC, TAU_INH) / c)
    checked, worst = 0, 0.0
    for line in lines:
        word, *args = line.split()
        if word == "params":
            ref = Reference(tau_m, c, v_rest, v_init, bias)
            continue
        t = float(args[0])
        ref.advance(t)
        if word == "exc":
            ref.i_exc += mp.mpf(float(args[1]))
        elif word == "inh":
            ref.i_inh += mp.mpf(float(args[1]))
        else:
            got_t, v, i_exc, i_inh = next(samples)
            assert got_t == t, (got_t, t)
            for name, value, want, size, scale in (
                    ("v", v, ref.v, ref.v_size, v_scale),
                    ("i_exc", i_exc, ref.i_exc, abs(ref.i_exc), current_scale),
                    ("i_inh", i_inh, ref.i_inh, abs(ref.i_inh), current_scale)):
                checked += 1
                bound = REL_TOL * max(size, FLOOR * scale)
                if math.isfinite(value):
                    worst = max(worst, float(abs(mp.mpf(value) - want) / max(size, FLOOR * scale)))
                if not math.isfinite(value) or abs(mp.mpf(value) - want) > bound:
                    problems.append(f"{label}: {name}({t!r} s) = {value!r}, reference {mp.nstr(want, 20)}, "
                                    f"error {mp.nstr(abs(mp.mpf(value) - want) / max(size, FLOOR * scale), 3)} "
                                    f"relative (limit {REL_TOL})")
    return checked, worst


def run_probe(probe, lines):
    result = subprocess.run([probe], input="\n".join(lines) + "\n", capture_output=True, text=True, timeout=60)
    if result.returncode != 0:
        raise SystemExit(f"lif_probe failed ({result.returncode}): {result.stderr}")
    samples, spikes = [], None
    for row in result.stdout.splitlines():
        word, *values = row.split()
        if word == "sample":
            samples.append(tuple(float(x) for x in values))
        elif word == "spikes":
            spikes = int(values[0])
    return samples, spikes


def main():
    probe = sys.argv[1]
    problems = []
    cases = []  # (label, tau_m, setting, lines)
    for tau_label, tau_m in TAU_M:
        for setting in SETTINGS:
            for s in SINGLE:
                cases.append((f"{tau_label}, {setting[0]}, one advance of {s:g} s", tau_m, setting,
                              script_single(tau_m, setting, s)))
            cases.append((f"{tau_label}, {setting[0]}, inputs {IDLE[0]:g} s to 100 years apart", tau_m, setting,
                          script_sequence(tau_m, setting)))
    all_lines = [line for case in cases for line in case[3]]
    samples, spikes = run_probe(probe, all_lines)
    if spikes != 0:
        problems.append(f"the neuron fired {spikes} times; the comparison assumes it never does")
    checked, at, worst = 0, 0, 0.0
    for label, tau_m, setting, lines in cases:
        n = sum(1 for line in lines if line.startswith("sample"))
        count, case_worst = check(label, tau_m, setting, lines, samples[at:at + n], problems)
        checked, worst, at = checked + count, max(worst, case_worst), at + n
    if at != len(samples):
        problems.append(f"lif_probe printed {len(samples)} samples, expected {at}")
    for p in problems[:40]:
        print("FAIL", p)
    print(f"{checked} values in {len(cases)} cases compared; largest relative error {worst:.2g} "
          f"(limit {REL_TOL:g}); {len(problems)} problems")
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())
