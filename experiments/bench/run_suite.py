#!/usr/bin/python3
"""nvsyn's benchmark suite: one command that runs every speed benchmark in one session
and prints one table (Markdown), optionally appended to experiments/bench/RESULTS.md.

Benchmarks (each: wall time per model second, synaptic events per second, peak memory,
bytes per synapse, build time, 1 versus 2 threads):
  current_based_4k     models/benchmarks/current_based_4k.toml for 1 s, alternated with
                       our numpy reference of it (current_based_reference.py) --repeats
                       times each: speed as a ratio, and both mean rates
  fixed_in_degree_N    the same network at N neurons with every neuron's input fixed at
                       the 4k network's (suite_models.py), once per size, the model time
                       capped by a per-size wall budget
  demo_static          models/demo_network.toml (events dominate), 10 s
  demo_stdp_ideal/pcm  the same with pair STDP on ideal weights / the phase-change preset
                       (run_plastic.sh's variants), alternated with the static run

Modes:
  (default)            everything above, sizes 4k, 16k, 64k, 256k, 1M
  --quick              only the sizes up to 16k
  --smoke              every benchmark at a tiny size (seconds); checks only that each run
                       completes and that its spike counts equal those of a normal
                       `nvsyn run` of the same model and seed; never a time (CTest
                       bench_suite_smoke)
  --write-results      append a dated section (table, machine, commit, command) to
                       experiments/bench/RESULTS.md
  --profile            also record a perf profile (cpu-clock, call graphs) of the 4k
                       benchmark network and include the top of its report

Usage: experiments/bench/run_suite.py [--build DIR] [--quick | --smoke] [--sizes 4k,16k]
       [--repeats 3] [--size-budget 180] [--profile] [--write-results] [--label TEXT]
"""
import argparse
import datetime
import json
import math
import os
import shlex
import shutil
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
sys.path.insert(0, HERE)

import suite_models  # noqa: E402
import suite_report  # noqa: E402
import suite_runs  # noqa: E402
from suite_report import Row, median  # noqa: E402

REFERENCE_SCRIPT = os.path.join(HERE, "current_based_reference.py")
RESULTS = os.path.join(HERE, "RESULTS.md")
# Mean rate of current_based_4k over 1 s, stored from the kernel before the rewrite (CTest kernel_reference).
KERNEL_REFERENCE = os.path.join(ROOT, "tests", "kernel", "reference", "current_based_4k_statistics.json")
FULL_SIZES = [4_000, 16_000, 64_000, 256_000, 1_000_000]
QUICK_SIZES = [4_000, 16_000]
SMOKE_SIZES = [1_000, 2_000]
SHORTEST_SERIES_TIME_S = 0.02   # 200 windows of 0.1 ms


def series_model_time_s(neurons):
    """Model time per size before the wall budget: 1 s up to 16k neurons, less above
    (today's kernel needs about 1.8 ms of wall time per neuron and model second)."""
    if neurons <= 16_000:
        return 1.0
    if neurons <= 64_000:
        return 0.25
    return 0.1


def parse_size(text):
    text = text.strip().lower()
    factor = {"k": 1_000, "m": 1_000_000}.get(text[-1:], 1)
    value = float(text[:-1]) if factor != 1 else float(text)
    n = int(round(value * factor))
    if n < 100:
        raise argparse.ArgumentTypeError(f"size {text!r}: at least 100 neurons")
    return n


class Suite:
    def __init__(self, args):
        self.args = args
        self.nvsyn = os.path.join(args.build, "nvsyn")
        if not os.access(self.nvsyn, os.X_OK):
            raise SystemExit(f"no nvsyn program in {args.build}: build it first "
                             f"(cmake --build {args.build} --target nvsyn_cli)")
        self.work = args.scratch or tempfile.mkdtemp(prefix="nvsyn-bench-")
        os.makedirs(self.work, exist_ok=True)
        self.threads = [1, 2] if suite_runs.supports_threads(self.nvsyn) else [None]
        self.smoke = args.smoke
        self.rows, self.findings = [], []
        self.nvsyn_runs = []       # (what, model, duration, spikes): the smoke test compares each
        self.start = time.perf_counter()
        self.counter = 0

    # -- helpers -----------------------------------------------------------------
    def log(self, text):
        print(f"[{time.perf_counter() - self.start:7.1f} s] {text}", file=sys.stderr, flush=True)

    def tag(self, name):
        self.counter += 1
        return f"{self.counter:03d}_{name}"

    def run(self, what, model, duration_s, threads):
        run = suite_runs.run_nvsyn(self.nvsyn, model, duration_s, self.work, self.tag(what), threads)
        self.nvsyn_runs.append((f"{what} (threads {threads if threads else 'default'})", model, duration_s, run.spikes))
        self.log(f"{what} threads={threads or 'default'}: {run.wall_per_model_s:.3g} s per model s, "
                 f"{run.events_per_s:.3g} events/s, {run.total_spikes} spikes")
        return run

    def check(self, what, model):
        c = suite_runs.check_nvsyn(self.nvsyn, model, self.work, self.tag(what))
        self.log(f"{what} check: {c.neurons} neurons, {c.synapses} synapses, built in {c.build_s:.2f} s")
        return c

    def threads_cell(self, by_threads):
        if None in by_threads:
            return "n/a (no --threads)"
        one, two = by_threads[1], by_threads[2]
        speedup = median([r.wall_per_model_s for r in one]) / median([r.wall_per_model_s for r in two])
        same = all(a.spikes == b.spikes for a, b in zip(one, two))
        return f"{speedup:.2f}x" + ("" if same else " (spike counts differ between 1 and 2 threads!)")

    def note_determinism(self, what, runs):
        if any(r.spikes != runs[0].spikes for r in runs):
            self.findings.append(f"- {what}: spike counts differ between repetitions of the same model and seed "
                                 f"({[r.total_spikes for r in runs]}): a determinism bug.")

    # -- benchmarks --------------------------------------------------------------
    def current_based(self):
        model = suite_models.BENCHMARK_4K
        duration = 0.02 if self.smoke else 1.0
        repeats = 1 if self.smoke else self.args.repeats
        scale = 0.25 if self.smoke else 1.0
        check = self.check("current_based_4k", model)
        runs = {t: [] for t in self.threads}
        refs = []
        for _ in range(repeats):  # alternated, so both see the same load of the shared machine
            for t in self.threads:
                runs[t].append(self.run("current_based_4k", model, duration, t))
            ref = suite_runs.run_reference(sys.executable, REFERENCE_SCRIPT, self.work, self.tag("numpy"), duration,
                                           self.args.reference_seed, scale)
            self.log(f"numpy reference: {ref.wall_per_model_s:.3g} s per model s, rate {ref.mean_rate_hz:.3f} Hz")
            refs.append(ref)
        main = runs[self.threads[0]]
        self.note_determinism("current_based_4k", main)
        nv_wall = [r.wall_per_model_s for r in main]
        ref_wall = [r.wall_per_model_s for r in refs]
        pair = [b / a for a, b in zip(nv_wall, ref_wall)]
        ratio = median(ref_wall) / median(nv_wall)
        self.rows.append(Row("current_based_4k", check.neurons, check.synapses, duration, nv_wall,
                             [r.events_per_s for r in main],
                             f"{ratio:.3g}x numpy" + (f" [{min(pair):.3g}-{max(pair):.3g}]" if len(pair) > 1 else ""),
                             median([r.mean_rate_hz for r in main]), max(r.peak_rss_mib or 0 for r in main) or None,
                             check.bytes_per_synapse, check.build_s, self.threads_cell(runs)))
        ref_values = refs[0].values
        self.rows.append(Row("numpy reference", int(ref_values["neurons"]), int(ref_values["synapses"]), duration,
                             ref_wall, None, "1 (reference)", median([r.mean_rate_hz for r in refs]),
                             max(r.peak_rss_mib or 0 for r in refs) or None, None,
                             median([float(r.values["build_s"]) for r in refs]), "n/a (numpy)"))
        nv_rate, ref_rate = median([r.mean_rate_hz for r in main]), median([r.mean_rate_hz for r in refs])
        self.findings.append(
            f"- current_based_4k: nvsyn {median(nv_wall):.3g} s and numpy {median(ref_wall):.3g} s of wall time per "
            f"model second: nvsyn is {ratio:.3g} times as fast as the numpy reference (target: at least 10 with one "
            f"thread, 20 with two). Mean rates {nv_rate:.3f} Hz (nvsyn) and {ref_rate:.3f} Hz (numpy), "
            f"{100 * (nv_rate / ref_rate - 1):+.1f}% (target: within 10%).")
        stored = self.stored_kernel_rate_hz()
        if stored is not None and duration == 1.0:
            self.findings.append(
                f"- current_based_4k mean rate against the one stored from the kernel before the rewrite "
                f"({os.path.relpath(KERNEL_REFERENCE, ROOT)}): {nv_rate:.4f} Hz against {stored:.4f} Hz, "
                f"{100 * (nv_rate / stored - 1):+.2f}% (the rewrite must stay within 2%).")
        if None not in runs:
            two = median(ref_wall) / median([r.wall_per_model_s for r in runs[2]])
            self.findings.append(f"- current_based_4k with 2 threads: {two:.3g} times as fast as the numpy reference.")

    @staticmethod
    def stored_kernel_rate_hz():
        if not os.path.exists(KERNEL_REFERENCE):
            return None
        with open(KERNEL_REFERENCE) as f:
            return float(json.load(f)["rate_hz"])

    def series(self):
        sizes = self.args.sizes or (SMOKE_SIZES if self.smoke else QUICK_SIZES if self.args.quick else FULL_SIZES)
        previous = None  # (neurons, wall per model second) of the last size run
        cost_ns = {}
        for n in sizes:
            what = f"fixed_in_degree_{n}"
            model = suite_models.write_fixed_in_degree(self.work, n)
            check = self.check(what, model)
            duration = SHORTEST_SERIES_TIME_S if self.smoke else series_model_time_s(n)
            capped = False
            if previous and not self.smoke:
                predicted = previous[1] * n / previous[0]   # cost so far grows with the neurons
                affordable = math.floor(self.args.size_budget / predicted / 0.01) * 0.01
                if affordable < duration:
                    duration, capped = max(SHORTEST_SERIES_TIME_S, affordable), True
                    self.log(f"{what}: predicted {predicted:.3g} s per model s; model time capped at {duration:g} s")
            runs = {t: [self.run(what, model, duration, t)] for t in self.threads}
            main = runs[self.threads[0]][0]
            previous = (n, main.wall_per_model_s)
            cost_ns[n] = 1e9 / main.events_per_s if main.events_per_s > 0 else float("nan")
            self.rows.append(Row(what, check.neurons, check.synapses, main.model_time_s, [main.wall_per_model_s],
                                 [main.events_per_s], "capped by budget" if capped else "", main.mean_rate_hz,
                                 main.peak_rss_mib, check.bytes_per_synapse, check.build_s, self.threads_cell(runs)))
        if len(cost_ns) > 1 and not self.smoke:
            values = list(cost_ns.values())
            self.findings.append(
                "- fixed in-degree series, wall time per synaptic event: "
                + ", ".join(f"{n // 1000}k {c:.3g} ns" for n, c in cost_ns.items())
                + f"; largest / smallest {max(values) / min(values):.2f} (target: flat within 30%).")

    def demo(self):
        paths = suite_models.write_demo_variants(self.work)
        duration = 0.2 if self.smoke else self.args.demo_time
        repeats = 1 if self.smoke else self.args.repeats
        checks = {name: self.check(f"demo_{name}", path) for name, path in paths.items()}
        runs = {name: {t: [] for t in self.threads} for name in paths}
        for _ in range(repeats):  # alternated: static, ideal, phase-change, static, ...
            for name, path in paths.items():
                for t in self.threads:
                    runs[name][t].append(self.run(f"demo_{name}", path, duration, t))
        static_events = median([r.events_per_s for r in runs["static"][self.threads[0]]])
        for name in paths:
            main = runs[name][self.threads[0]]
            self.note_determinism(f"demo_{name}", main)
            events = [r.events_per_s for r in main]
            ratio = ""
            if name != "static":
                per_round = [a.events_per_s / b.events_per_s for a, b in zip(main, runs["static"][self.threads[0]])]
                ratio = f"{median(events) / static_events:.3g}x static events/s" + (
                    f" [{min(per_round):.3g}-{max(per_round):.3g}]" if len(per_round) > 1 else "")
            c = checks[name]
            self.rows.append(Row(f"demo_{name}", c.neurons, c.synapses, duration, [r.wall_per_model_s for r in main],
                                 events, ratio, median([r.mean_rate_hz for r in main]),
                                 max(r.peak_rss_mib or 0 for r in main) or None, c.bytes_per_synapse, c.build_s,
                                 self.threads_cell(runs[name])))
        if not self.smoke:
            line = f"- demo network: {static_events:.3g} synaptic events/s (target: at least 2e7 per core)"
            for name in ("stdp_ideal", "stdp_pcm"):
                events = median([r.events_per_s for r in runs[name][self.threads[0]]])
                line += f"; {name} {events:.3g} ({events / static_events:.2f} of static)"
            self.findings.append(line + " (target for stdp_pcm: at least 0.7 of static).")

    def profile(self):
        """perf profile of the 4k benchmark network; returns (commands, report head)."""
        data = os.path.join(self.work, "perf.data")
        duration = self.args.profile_time
        record = ["perf", "record", "-e", "cpu-clock", "-g", "-o", data, self.nvsyn, "run", suite_models.BENCHMARK_4K,
                  "-o", os.path.join(self.work, "profile.h5"), "--force", "--quiet", "--duration", f"{duration:g} s"]
        self.log("perf record of current_based_4k")
        subprocess.run(record, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        report = subprocess.run(["perf", "report", "-i", data, "--no-children", "--stdio", "-g", "none"],
                                check=True, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True).stdout
        lines = [line for line in report.splitlines() if line.strip() and not line.startswith("#")]
        shown = (f"perf record -e cpu-clock -g {self.args.build}/nvsyn run models/benchmarks/current_based_4k.toml "
                 f"-o profile.h5 --force --quiet --duration \"{duration:g} s\"\n"
                 f"perf report --no-children --stdio -g none | grep -v '^#' | grep -v '^$' | head -25")
        return shown, "\n".join(lines[:25])

    # -- smoke -------------------------------------------------------------------
    def smoke_compare(self):
        """Each suite run against a normal run of the same model, seed and duration."""
        problems = []
        for i, (what, model, duration, spikes) in enumerate(self.nvsyn_runs):
            direct = suite_runs.run_nvsyn_direct(self.nvsyn, model, duration, os.path.join(self.work, f"direct_{i}.h5"))
            if direct != spikes:
                problems.append(f"{what}: the suite counted {spikes}, a normal nvsyn run {direct}")
            else:
                print(f"ok   {what}: {sum(spikes.values())} spikes, as a normal nvsyn run", flush=True)
        return problems


def section(suite, args, started, load_start, profile):
    command = "experiments/bench/run_suite.py " + shlex.join(sys.argv[1:])
    title = "## Benchmark suite" + (f": {args.label}" if args.label else "") + f" ({started:%Y-%m-%d})"
    load_end = os.getloadavg()[0]
    parts = [
        title, "",
        f"Date: {started:%Y-%m-%dT%H:%M}Z. Machine: {suite_report.machine_description()}; load average "
        f"(1 min) {load_start:.1f} at the start and {load_end:.1f} at the end. The machine is shared with other "
        f"engineers' compilers, so absolute times vary from run to run (up to 30% was seen before); the ratios, "
        f"measured in the same session with alternated runs, are what matter.",
        f"Build: {suite_report.build_description(args.build)}; program {suite_report.program_description(suite.nvsyn)}. "
        f"Source: {suite_report.source_description(ROOT)}.",
        f"nvsyn threads: {'1 and 2 (--threads)' if None not in suite.threads else 'no --threads option: one thread'}. "
        f"Suite time: {time.perf_counter() - suite.start:.0f} s.", "",
        "```text", f"$ {command}", "```", "",
        suite_report.markdown_table(suite.rows), "",
        *suite.findings, "",
        "How to read the table:", "", suite_report.TABLE_NOTES,
    ]
    if profile:
        parts += ["", "Profile of the 4k benchmark network (top functions by own time):", "",
                  "```text", *("$ " + c for c in profile[0].splitlines()), profile[1], "```"]
    return "\n".join(parts) + "\n"


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0],
                                 formatter_class=argparse.RawDescriptionHelpFormatter, epilog=__doc__.split("\n\n", 1)[1])
    ap.add_argument("--build", default=os.path.join(ROOT, "build"), help="build folder holding nvsyn (default: build)")
    mode = ap.add_mutually_exclusive_group()
    mode.add_argument("--quick", action="store_true", help="scaling series up to 16k neurons only")
    mode.add_argument("--smoke", action="store_true", help="tiny sizes; check completion and spike counts only")
    ap.add_argument("--sizes", type=lambda s: [parse_size(x) for x in s.split(",")],
                    help="scaling series sizes, e.g. 4k,16k,64k (default: 4k..1M, --quick 4k,16k)")
    ap.add_argument("--repeats", type=int, default=3, help="alternated runs of the compared benchmarks (default 3)")
    ap.add_argument("--size-budget", type=float, default=180.0,
                    help="wall seconds one scaling-series run may take; larger sizes get less model time (default 180)")
    ap.add_argument("--demo-time", type=float, default=10.0, help="model seconds of the demo runs (default 10)")
    ap.add_argument("--reference-seed", type=int, default=1, help="seed of the numpy reference (default 1)")
    ap.add_argument("--profile", action="store_true", help="perf profile of the 4k benchmark network")
    ap.add_argument("--profile-time", type=float, default=1.0, help="model seconds of the profiled run (default 1)")
    ap.add_argument("--write-results", action="store_true", help="append the section to experiments/bench/RESULTS.md")
    ap.add_argument("--label", default="", help="title of the RESULTS.md section, e.g. 'before the kernel rewrite'")
    ap.add_argument("--scratch", help="folder for model files and run outputs (default: a new temporary folder)")
    ap.add_argument("--keep-scratch", action="store_true", help="keep the scratch folder")
    args = ap.parse_args()
    if args.smoke and (args.write_results or args.profile):
        ap.error("--smoke measures nothing worth keeping: no --write-results or --profile with it")
    if args.repeats < 1:
        ap.error("--repeats must be at least 1")
    if args.size_budget <= 0 or args.demo_time <= 0 or args.profile_time <= 0:
        ap.error("--size-budget, --demo-time and --profile-time must be positive")

    started = datetime.datetime.now(datetime.timezone.utc)
    load_start = os.getloadavg()[0]
    suite = Suite(args)
    try:
        suite.current_based()
        suite.series()
        suite.demo()
        if args.smoke:
            problems = suite.smoke_compare()
            for p in problems:
                print(f"FAIL {p}")
            print(f"smoke: {len(suite.nvsyn_runs)} nvsyn runs and the numpy reference completed; "
                  f"{len(problems)} spike-count mismatches")
            return 1 if problems else 0
        profile = suite.profile() if args.profile else None
        text = section(suite, args, started, load_start, profile)
        print(text)
        if args.write_results:
            with open(RESULTS, "a") as f:
                f.write("\n" + text)
            print(f"appended to {RESULTS}", file=sys.stderr)
        return 0
    except suite_runs.RunError as e:
        print(f"benchmark failed: {e}", file=sys.stderr)
        return 1
    finally:
        if not args.keep_scratch and not args.scratch:
            shutil.rmtree(suite.work, ignore_errors=True)


if __name__ == "__main__":
    sys.exit(main())
