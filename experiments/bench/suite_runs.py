"""One measured run for the benchmark suite (run_suite.py): an `nvsyn run`, an
`nvsyn check` or the numpy reference, each returned as a record of what it printed
and what it cost. Nothing here decides what is run; nothing here formats tables.

Where each figure comes from:
- wall_s of `nvsyn run`: the simulation loop only, as nvsyn prints it ("model time T s
  in W s wall"), so building the network and writing the run file are not in it; the
  numpy reference's wall_s is likewise its loop only.
- process_s: the whole process, measured here.
- peak_rss_mib: "Maximum resident set size" of /usr/bin/time -v (n/a without it).
- build_s of `nvsyn check`: its whole wall time; check reads the model and builds the
  network (wiring, weights, devices) without running it.
"""
import dataclasses
import os
import re
import subprocess
import time

import h5py

TIME_PROGRAM = "/usr/bin/time"


class RunError(RuntimeError):
    """A benchmark program failed or printed something this module cannot read."""


@dataclasses.dataclass
class NvsynRun:
    model_time_s: float          # model time reached
    wall_s: float                # simulation loop, as printed by nvsyn
    process_s: float             # whole process
    synaptic_events: int
    spikes: dict                 # population -> spike count, from nvsyn's summary table
    neurons: dict                # population -> neurons
    peak_rss_mib: float | None

    @property
    def total_spikes(self):
        return sum(self.spikes.values())

    @property
    def mean_rate_hz(self):
        return self.total_spikes / sum(self.neurons.values()) / self.model_time_s

    @property
    def wall_per_model_s(self):
        return self.wall_s / self.model_time_s

    @property
    def events_per_s(self):
        return self.synaptic_events / self.wall_s if self.wall_s > 0 else float("nan")


@dataclasses.dataclass
class NvsynCheck:
    build_s: float               # whole `nvsyn check` (read + build, no run)
    neurons: int
    synapses: int
    built_mib: float             # "memory of the built network", as printed
    neuron_bytes: int            # sum over populations of neurons x bytes/neuron

    @property
    def bytes_per_synapse(self):
        """Built network memory less the neurons' state, per synapse: storage, learning
        and device state of the synapses. `nvsyn check` prints the total in MiB with one
        decimal, so small networks carry a rounding error of +-0.05 MiB / synapses."""
        if self.synapses == 0:
            return float("nan")
        return (self.built_mib * 1024 * 1024 - self.neuron_bytes) / self.synapses


@dataclasses.dataclass
class ReferenceRun:
    values: dict                 # the key=value pairs the reference prints
    process_s: float
    peak_rss_mib: float | None

    @property
    def wall_per_model_s(self):
        return float(self.values["wall_per_model_s"])

    @property
    def mean_rate_hz(self):
        return float(self.values["rate_hz"])


def _timed(argv, stdout_path, time_path):
    """Runs argv under /usr/bin/time -v when present; returns (process seconds, peak
    RSS in MiB or None, stdout text)."""
    wrapped = ([TIME_PROGRAM, "-v", "-o", time_path] + argv) if os.access(TIME_PROGRAM, os.X_OK) else argv
    start = time.perf_counter()
    proc = subprocess.run(wrapped, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    elapsed = time.perf_counter() - start
    with open(stdout_path, "w") as f:
        f.write(proc.stdout)
    if proc.returncode != 0:
        raise RunError(f"{' '.join(argv)} exited with status {proc.returncode}:\n{proc.stdout[-2000:]}{proc.stderr[-2000:]}")
    rss = None
    if wrapped is not argv:
        with open(time_path) as f:
            m = re.search(r"Maximum resident set size \(kbytes\): (\d+)", f.read())
        if m:
            rss = int(m.group(1)) / 1024
    return elapsed, rss, proc.stdout


_RUN_LINE = re.compile(r"model time (\S+) s in (\S+) s wall .*?; (\d+) synaptic events, (\d+) input spikes")
_TABLE_HEADER = re.compile(r"^population\s+neurons\s+spikes\s+rate_hz\s+cv_isi\s*$")


def parse_run_output(text):
    """The figures of nvsyn run's last lines: (model time, loop wall, events, spikes
    per population, neurons per population)."""
    m = _RUN_LINE.search(text)
    if not m:
        raise RunError(f"no 'model time ... synaptic events' line in nvsyn's output:\n{text[-2000:]}")
    spikes, neurons = {}, {}
    lines = text.splitlines()
    header = next((i for i, line in enumerate(lines) if _TABLE_HEADER.match(line)), None)
    if header is None:
        raise RunError(f"no per-population summary in nvsyn's output:\n{text[-2000:]}")
    for line in lines[header + 1:]:
        fields = line.split()
        if len(fields) != 5:
            break
        neurons[fields[0]] = int(fields[1])
        spikes[fields[0]] = int(fields[2])
    return float(m.group(1)), float(m.group(2)), int(m.group(3)), spikes, neurons


def run_nvsyn(nvsyn, model, duration_s, work, tag, threads=None):
    """`nvsyn run MODEL --duration D` with the per-population summary; the run file is
    deleted afterwards (the suite needs only the printed figures)."""
    out = os.path.join(work, f"{tag}.h5")
    argv = [nvsyn, "run", model, "-o", out, "--force", "--duration", f"{duration_s:g} s"]
    if threads is not None:
        argv += ["--threads", str(threads)]
    process_s, rss, text = _timed(argv, os.path.join(work, f"{tag}.out"), os.path.join(work, f"{tag}.time"))
    if os.path.exists(out):
        os.remove(out)
    model_time, wall, events, spikes, neurons = parse_run_output(text)
    return NvsynRun(model_time, wall, process_s, events, spikes, neurons, rss)


def run_nvsyn_direct(nvsyn, model, duration_s, out):
    """A normal `nvsyn run` (no wrapper, no options beyond the duration), its spike
    counts read from the run file with h5py: the smoke test's independent answer."""
    subprocess.run([nvsyn, "run", model, "-o", out, "--force", "--quiet", "--duration", f"{duration_s:g} s"],
                   check=True, stdout=subprocess.DEVNULL)
    with h5py.File(out, "r") as f:
        counts = {name: int(group["neuron"].shape[0]) for name, group in f["spikes"].items()}
    os.remove(out)
    return counts


_CHECK_TOTAL = re.compile(r"total: (\d+) neurons, (\d+) synapses; memory of the built network ([0-9.]+) MiB")
_CHECK_POPULATION = re.compile(r"^\s+\S+\s+(\d+) neurons\s+model \S+\s+(\d+) bytes/neuron", re.M)


def check_nvsyn(nvsyn, model, work, tag):
    """`nvsyn check MODEL`: build time and memory of the built network."""
    process_s, _, text = _timed([nvsyn, "check", model], os.path.join(work, f"{tag}.check"),
                                os.path.join(work, f"{tag}.check.time"))
    m = _CHECK_TOTAL.search(text)
    if not m:
        raise RunError(f"no 'total: ... memory of the built network' line in nvsyn check's output:\n{text[-2000:]}")
    neuron_bytes = sum(int(n) * int(b) for n, b in _CHECK_POPULATION.findall(text))
    return NvsynCheck(process_s, int(m.group(1)), int(m.group(2)), float(m.group(3)), neuron_bytes)


def run_reference(python, script, work, tag, duration_s, seed, scale=1.0):
    """The numpy reference (current_based_reference.py): its key=value line."""
    argv = [python, script, "--duration", f"{duration_s:g}", "--seed", str(seed), "--scale", f"{scale:g}"]
    process_s, rss, text = _timed(argv, os.path.join(work, f"{tag}.out"), os.path.join(work, f"{tag}.time"))
    values = dict(pair.split("=", 1) for pair in text.split() if "=" in pair)
    for key in ("spikes", "rate_hz", "wall_per_model_s", "neurons", "synapses", "build_s"):
        if key not in values:
            raise RunError(f"the numpy reference printed no {key}=:\n{text[-2000:]}")
    return ReferenceRun(values, process_s, rss)


def supports_threads(nvsyn):
    """True when `nvsyn run` has a --threads option (added by the threading work)."""
    text = subprocess.run([nvsyn, "run", "--help"], stdout=subprocess.PIPE, stderr=subprocess.STDOUT,
                          text=True).stdout
    return re.search(r"(^|\s)--threads\b", text) is not None
