"""Tables and the RESULTS.md section of the benchmark suite (run_suite.py). Every
number printed here comes from a measurement passed in; nothing is typed by hand."""
import dataclasses
import datetime
import os
import platform
import re
import statistics
import subprocess


@dataclasses.dataclass
class Row:
    """One line of the table: a benchmark measured `runs` times (1-thread figures
    when nvsyn has --threads, the default thread count otherwise)."""
    name: str
    neurons: int
    synapses: int
    model_time_s: float
    wall_per_model_s: list          # one per repetition
    events_per_s: list | None = None
    ratio: str = ""
    rate_hz: float | None = None
    peak_rss_mib: float | None = None
    bytes_per_synapse: float | None = None
    build_s: float | None = None
    threads: str = ""


def median(values):
    return statistics.median(values)


def spread(values, fmt="{:.3g}"):
    """median [min-max] of the repetitions, or the one value."""
    if len(values) == 1:
        return fmt.format(values[0])
    return f"{fmt.format(median(values))} [{fmt.format(min(values))}-{fmt.format(max(values))}]"


def _optional(value, fmt):
    return "n/a" if value is None else fmt.format(value)


COLUMNS = ["benchmark", "neurons", "synapses", "model time (s)", "runs", "wall per model s (s)",
           "synaptic events/s", "ratio", "mean rate (Hz)", "peak RSS (MiB)", "bytes/synapse", "build (s)",
           "2 vs 1 thread"]


def markdown_table(rows):
    lines = ["| " + " | ".join(COLUMNS) + " |", "|" + "|".join("---" for _ in COLUMNS) + "|"]
    for r in rows:
        cells = [r.name, str(r.neurons), str(r.synapses), f"{r.model_time_s:g}", str(len(r.wall_per_model_s)),
                 spread(r.wall_per_model_s), spread(r.events_per_s) if r.events_per_s else "n/a", r.ratio or "",
                 _optional(r.rate_hz, "{:.3f}"), _optional(r.peak_rss_mib, "{:.1f}"),
                 _optional(r.bytes_per_synapse, "{:.1f}"), _optional(r.build_s, "{:.2f}"), r.threads]
        lines.append("| " + " | ".join(cells) + " |")
    return "\n".join(lines)


TABLE_NOTES = """\
- wall per model s: wall time of the simulation loop divided by the model time run (nvsyn prints the
  loop's wall time; the numpy reference times its loop likewise); median [min-max] over the runs.
- synaptic events/s: nvsyn's count of delivered synaptic events divided by the loop's wall time.
- ratio: for the benchmark network, numpy wall / nvsyn wall per model second (above 1: nvsyn
  is faster), from the medians, with the range of the per-pair ratios of the alternated runs;
  for the STDP variants, their synaptic events/s over the static demo network's (medians).
- peak RSS: largest "Maximum resident set size" of /usr/bin/time -v over the runs.
- bytes/synapse: `nvsyn check`'s "memory of the built network" less neurons x bytes/neuron,
  divided by the synapses (storage, learning and device state; +-0.05 MiB of rounding).
- build (s): wall time of `nvsyn check` on the model (reads the model and builds the network,
  no run); for the numpy reference its build_s (the sparse matrices).
- 2 vs 1 thread: wall(1 thread) / wall(2 threads), or n/a when `nvsyn run` has no --threads.
- the scaling series runs once per size; its model time is capped so that one run fits the
  per-size wall budget (estimated from the previous size), and runs shorter than 50 ms
  include the 4k network's start transient (every neuron fires once in its first 50 ms)."""


def machine_description():
    cpu = "unknown CPU"
    with open("/proc/cpuinfo") as f:
        m = re.search(r"^model name\s*:\s*(.*)$", f.read(), re.M)
        if m:
            cpu = m.group(1).strip()
    with open("/proc/meminfo") as f:
        kib = int(re.search(r"MemTotal:\s+(\d+)", f.read()).group(1))
    cores = len(os.sched_getaffinity(0))
    return f"{cores} cores (nproc), {cpu}, {kib / 1024 / 1024:.1f} GiB, {platform.system()} {platform.release()}"


def build_description(build_dir):
    cache = os.path.join(build_dir, "CMakeCache.txt")
    if not os.path.exists(cache):
        return f"{build_dir} (no CMakeCache.txt: build type unknown)"
    with open(cache) as f:
        text = f.read()
    build_type = re.search(r"^CMAKE_BUILD_TYPE:\w+=(.*)$", text, re.M)
    compiler = re.search(r"^CMAKE_CXX_COMPILER:\w+=(.*)$", text, re.M)
    version = ""
    if compiler:
        try:
            version = subprocess.run([compiler.group(1), "--version"], stdout=subprocess.PIPE, text=True).stdout.splitlines()[0]
        except (OSError, IndexError):
            version = compiler.group(1)
    return f"{build_dir}, {build_type.group(1) if build_type else 'unknown'} build, {version}"


def source_description(root):
    """The commit, and whether src/ differs from it (the tree is shared by several
    engineers; a benchmark of uncommitted sources says so)."""
    def git(*args):
        return subprocess.run(["git", "-C", root, *args], stdout=subprocess.PIPE, stderr=subprocess.DEVNULL,
                              text=True).stdout.strip()
    commit = git("rev-parse", "--short", "HEAD") or "unknown"
    subject = git("log", "-1", "--format=%s")
    changed = [line for line in git("status", "--porcelain", "--", "src").splitlines() if line.strip()]
    text = f"commit {commit} ({subject})"
    if changed:
        text += (f"; `git status` lists {len(changed)} uncommitted files under src/ when the suite ran, "
                 f"and the program was built from the working tree")
    return text


def program_description(program):
    built = datetime.datetime.fromtimestamp(os.path.getmtime(program), datetime.timezone.utc)
    return f"{program} (file time {built:%Y-%m-%dT%H:%M}Z)"
