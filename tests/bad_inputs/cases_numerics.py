"""Numerics during the run (issue 8, "numerical guards during the run"):

* a state that becomes non-finite (a requested weight change that overflows to
  infinity, synaptic currents that drive V beyond the range of a double) ends the run
  with exit status 1 and a message naming pathway and synapse or population and
  neuron, the variable and the model time; the run file is kept at the output path,
  with status "failed", the message in the root attribute "failure" and no NaN or
  infinity in what it recorded;
* the reported plausible model that produced NaN (tau_m = 5 ms below the default
  tau_inh, then seconds of silence) runs to completion with finite traces;
* Ctrl-C ends a run within seconds even in a learning pathway whose updates used to
  ask for billions of device pulses (pair STDP with tau_plus = 1e308 s on
  soft-bounded devices; it used to ignore SIGINT for more than 20 s);
* a window count that cannot be counted (1e300 s in 1 ms windows) is refused even
  with --allow-large-run, never run as "complete" with time_reached 0.
These models use values far outside the plausible ranges on purpose, so they say
`[simulation] allow_implausible = true`.
"""
import glob
import math
import os
import signal
import subprocess
import time

import h5py
import numpy as np

FAILED = 1
INTERRUPTED = 130


def write(ctx, name, text):
    path = os.path.join(ctx.scratch, name)
    with open(path, "w", encoding="utf-8") as f:
        f.write(text)
    return path


# Pairing protocol with a_plus * w_max = 1e312 A: the first potentiation is infinite.
OVERFLOWING_RULE = """[simulation]
duration = "3 s"
seed = 1
allow_implausible = true

[population.post]
size = 1

[input.pre]
kind = "times"
times = ["1 s", "2 s"]

[input.driver]
kind = "times"
times = ["1.008 s", "2.008 s"]

[pathway.drive]
from = "driver"
to = "post"
wiring = "all_to_all"
weight = "1.5 nA"
delay = "1 ms"

[pathway.learn]
from = "pre"
to = "post"
wiring = "all_to_all"
weight = "0.05 nA"
delay = "1 ms"

[pathway.learn.plasticity]
rule = "pair_stdp"
a_plus = 1e300
w_max = "1e12 A"

[record.trace.post]
population = "post"
variables = ["v"]
neurons = [0]
interval = "100 ms"
"""

# A finite synaptic weight (1e306 A) whose PSP exceeds the range of a double.
OVERFLOWING_CURRENT = """[simulation]
duration = "1 s"
seed = 1
allow_implausible = true

[population.cells]
size = 3

[input.pre]
kind = "times"
times = ["250 ms"]

[pathway.huge]
from = "pre"
to = "cells"
wiring = "all_to_all"
weight = "1e306 A"
delay = "1 ms"

[record.trace.cells]
population = "cells"
variables = ["v", "i_exc"]
neurons = [0, 1, 2]
interval = "10 ms"
"""

# The reported model: plausible values, NaN after about 7.1 s of silence.
SILENT_AFTER_INHIBITION = """[simulation]
duration = "20 s"
seed = 1

[population.cell]
size = 1
tau_m = "5 ms"

[input.pre]
kind = "times"
times = ["10 ms"]

[pathway.inh]
from = "pre"
to = "cell"
receptor = "inhibitory"
wiring = "all_to_all"
weight = "-0.5 nA"
delay = "1 ms"

[record.trace.cell]
population = "cell"
variables = ["v", "i_exc", "i_inh"]
neurons = [0]
interval = "9 s"
"""

# competitive_stdp.toml with tau_plus = 1e308 s on soft-bounded devices: traces never
# decay, requests grow, and near the bound the step shrinks towards zero.
SLOW_LEARNING = """[simulation]
duration = "300 s"
seed = 2000
allow_implausible = true

[population.neuron]
size = 1
tau_m = "20 ms"
capacitance = "250 pF"
v_rest = "-70 mV"
v_threshold = "-54 mV"
v_reset = "-60 mV"
refractory = "1 ms"
tau_exc = "5 ms"
tau_inh = "5 ms"

[input.excitatory]
kind = "poisson"
size = 1000
rate = "10 Hz"

[input.inhibitory]
kind = "poisson"
size = 200
rate = "10 Hz"

[pathway.exc]
from = "excitatory"
to = "neuron"
wiring = "all_to_all"
weight = { dist = "uniform", low = "0 pA", high = "12 pA" }
delay = "1 ms"

[pathway.exc.plasticity]
rule = "pair_stdp"
form = "additive"
a_plus = 0.005
a_minus = 0.00525
tau_plus = "1e308 s"
tau_minus = "20 ms"
w_max = "12 pA"

[pathway.exc.synapse]
preset = "{preset}"
weight_max = "12 pA"

[pathway.inh]
from = "inhibitory"
to = "neuron"
receptor = "inhibitory"
wiring = "all_to_all"
weight = "-10 pA"
delay = "1 ms"
"""


def finite_datasets(f):
    """Names of float datasets in an open HDF5 file that hold NaN or infinity."""
    bad = []

    def visit(name, obj):
        if isinstance(obj, h5py.Dataset) and obj.dtype.kind == "f" and obj.size and not np.all(np.isfinite(obj[()])):
            bad.append(name)

    f.visititems(visit)
    return bad


def check_failed_file(ck, name, output, texts):
    """The kept run file of a failed run: status, message, nothing non-finite."""
    problems = []
    if glob.glob(glob.escape(output) + ".partial-*"):
        problems.append("a .partial file was left beside the output")
    if not os.path.exists(output):
        ck.report(name, ["no run file at the output path"])
        return
    with h5py.File(output, "r") as f:
        status = f.attrs.get("status")
        failure = f.attrs.get("failure", "")
        if status != "failed":
            problems.append(f"status {status!r}, expected 'failed'")
        for text in texts:
            if text not in failure:
                problems.append(f"attribute 'failure' ({failure!r}) lacks {text!r}")
        reached = float(f.attrs.get("time_reached", math.nan))
        if not (0 <= reached < float(f.attrs["duration"])):
            problems.append(f"time_reached {reached} is not before the duration")
        bad = finite_datasets(f)
        if bad:
            problems.append(f"non-finite values in {', '.join(bad)}")
    os.remove(output)
    ck.report(name, problems)


def case_failures(ck, ctx):
    for name, text, texts in (
            ("numerics: a_plus 1e300 with w_max 1e12 A: infinite request stops the run", OVERFLOWING_RULE,
             ("pathway 'learn', synapse 0", "requested weight change = inf A", "at model time 1.01")),
            ("numerics: a 1e306 A weight: V beyond the range of a double stops the run", OVERFLOWING_CURRENT,
             ("population 'cells', neuron 0", "membrane potential overflows", "at model time 0.251 s"))):
        model = write(ctx, "numerics_failure.toml", text)
        output = os.path.join(ctx.scratch, "numerics_failure.h5")
        code, stdout, _ = ck.case(name, ["run", model, "-o", output, "-q"], status=FAILED,
                                  texts=("error: the run failed:", *texts, 'status "failed"'), absent=("internal error", "bug"),
                                  timeout=20)
        if code == FAILED:
            check_failed_file(ck, name + " (kept file)", output, texts)
            if "(failed" not in stdout:
                ck.report(name + " (last line)", [f"stdout does not say the file failed: {stdout!r}"])


def case_silence(ck, ctx):
    name = "numerics: tau_m 5 ms with the default tau_inh, silent for 20 s, stays finite"
    model = write(ctx, "numerics_silence.toml", SILENT_AFTER_INHIBITION)
    output = os.path.join(ctx.scratch, "numerics_silence.h5")
    code, _, _ = ck.case(name, ["run", model, "-o", output, "-q"], status=0, keep_output=(output,), timeout=20)
    if code != 0 or not os.path.exists(output):
        return
    problems = []
    with h5py.File(output, "r") as f:
        if f.attrs.get("status") != "complete" or float(f.attrs["time_reached"]) != 20.0:
            problems.append(f"status {f.attrs.get('status')!r}, time_reached {f.attrs.get('time_reached')}")
        values = f["traces/cell/v/value"][()]
        if values.shape[0] != 3:
            problems.append(f"{values.shape[0]} samples of v, expected 3 (0, 9, 18 s)")
        bad = finite_datasets(f)
        if bad:
            problems.append(f"non-finite values in {', '.join(bad)}")
    os.remove(output)
    ck.report(name + " (run file)", problems)


def case_interrupt(ck, ctx, preset):
    """SIGINT two seconds into a run whose learning updates used to take minutes."""
    name = f"numerics: Ctrl-C during slow learning on {preset} devices ends the run within seconds"
    model = write(ctx, "numerics_slow.toml",
                  SLOW_LEARNING.replace("{preset}", str(ctx.repo / "models" / "devices" / f"{preset}.toml")))
    output = os.path.join(ctx.scratch, "numerics_slow.h5")
    proc = subprocess.Popen([ck.nvsyn, "run", model, "-o", output, "-q"], stdout=subprocess.DEVNULL,
                            stderr=subprocess.PIPE, text=True)
    problems = []
    time.sleep(2.0)
    if proc.poll() is not None:
        ck.report(name, [f"the run ended before the interrupt (status {proc.returncode}); the case needs a longer run"],
                  proc.stderr.read())
        return
    sent = time.monotonic()
    proc.send_signal(signal.SIGINT)
    # The goal is about a second; 5 s leaves room for a loaded machine (it took over 20 s).
    limit_s = 5.0
    try:
        proc.wait(timeout=limit_s)
    except subprocess.TimeoutExpired:
        proc.kill()
        proc.wait()
        problems.append(f"still running {limit_s} s after SIGINT")
    waited = time.monotonic() - sent
    if proc.returncode != INTERRUPTED and not problems:
        problems.append(f"exit status {proc.returncode}, expected {INTERRUPTED}")
    if os.path.exists(output):
        with h5py.File(output, "r") as f:
            if f.attrs.get("status") != "interrupted":
                problems.append(f"status {f.attrs.get('status')!r}, expected 'interrupted'")
        os.remove(output)
    elif not problems:
        problems.append("no run file")
    for left in glob.glob(glob.escape(output) + ".partial-*"):
        os.remove(left)
        problems.append("a .partial file was left")
    if problems:
        problems.append(f"exit {waited:.2f} s after SIGINT")
    ck.report(name, problems, proc.stderr.read())


def case_uncountable_windows(ck, ctx):
    model = write(ctx, "numerics_windows.toml", SILENT_AFTER_INHIBITION.replace('duration = "20 s"',
                                                                               'duration = "1e300 s"'))
    output = os.path.join(ctx.scratch, "numerics_windows.h5")
    ck.case("numerics: 1e300 s in 1 ms windows is refused even with --allow-large-run",
            ["run", model, "-o", output, "--allow-large-run", "--allow-implausible"], texts=("2^53",),
            output=output, timeout=20)


def cases(ck, ctx):
    case_failures(ck, ctx)
    case_silence(ck, ctx)
    case_interrupt(ck, ctx, "ferroelectric_soft_bounds")
    case_interrupt(ck, ctx, "resistive_bidirectional")
    case_uncountable_windows(ck, ctx)
