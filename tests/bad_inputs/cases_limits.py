"""Limits (issue 8, "refuse before building what cannot run"), for the cases that a
fixed file cannot hold or that need a command line; the fixed ones are
models/limits_*.toml, run by cases_models.

* consent: the models/limits_*.toml that are only implausible or only costly pass
  `check` with --allow-implausible or --allow-large-run (or the [simulation] keys),
  with a warning for each implausible value; non-finite values stay errors;
* nesting: arrays, inline tables, table headers and dotted keys nested 10,000 and
  100,000 deep end in a located error (status 2), never a signal;
* long lists: a trace over a list of 10^6 neurons is refused by its cost; rows of a
  connection list with indices beyond 32 bits, femtosecond delays or weights that
  overflow are errors naming the file and row;
* indices beyond 32 bits in model files never wrap;
* command-line quantities: --duration, map-weights and device options are checked
  like model values (the --weight-max "1e-300 nA" that once ended in an internal
  std::stod error among them).
Each case ends within seconds.
"""
import os

from expectations import read_expectations

QUICK_S = 20

# A small valid model to vary, with the placeholders below.
MODEL = """[simulation]
duration = "{duration}"
{sim_extra}
[population.cell]
size = 3

[input.drive]
kind = "poisson"
size = 3
rate = "10 Hz"

[pathway.drive_cell]
from = "drive"
to = "cell"
{wiring}
weight = "0.1 nA"
delay = "{delay}"
{extra}"""


def model_text(duration="100 ms", sim_extra="", wiring='wiring = "all_to_all"', delay="1 ms", extra=""):
    return MODEL.format(duration=duration, sim_extra=sim_extra, wiring=wiring, delay=delay, extra=extra)


def write(ctx, name, text):
    path = os.path.join(ctx.scratch, name)
    with open(path, "w", encoding="utf-8") as f:
        f.write(text)
    return path


def corpus_model(ctx, name):
    return os.path.join(ctx.corpus, "models", f"limits_{name}.toml")


def cases(ck, ctx):
    consent_cases(ck, ctx)
    nesting_cases(ck, ctx)
    long_list_cases(ck, ctx)
    index_cases(ck, ctx)
    option_cases(ck, ctx)


def consent_cases(ck, ctx):
    out = ck.output
    # Implausible but finite: accepted with a warning that names the key and the range.
    for name in ("tau_m_femtosecond", "capacitance_tiny", "poisson_rate_gigahertz", "weight_huge", "a_plus_huge",
                 "tau_plus_huge", "w_max_tiny", "refractory_femtosecond", "device_g_max_huge", "spike_time_huge",
                 "verify_attempts_huge"):
        path = corpus_model(ctx, name)
        key = read_expectations(path)["key"]
        ck.case(f"check --allow-implausible limits_{name}", ["check", path, "--allow-implausible"], status=0,
                texts=["warning:", f"'{key}'", "outside the plausible range", "accepted"], timeout=QUICK_S)
    # Non-finite values are never accepted, whatever the consent.
    for name in ("weight_overflow", "capacitance_underflow"):
        path = corpus_model(ctx, name)
        ck.case(f"--allow-implausible keeps limits_{name} an error", ["check", path, "--allow-implausible"],
                texts=[read_expectations(path)["text"]], timeout=QUICK_S)
    # A value beyond 32 bits stays an error even when its range is waived.
    ck.case("--allow-implausible: max_pulses beyond 32 bits", ["check", corpus_model(ctx, "max_pulses_huge"),
                                                                "--allow-implausible"],
            texts=["'max_pulses'", "does not fit the 32-bit pulse counter"], timeout=QUICK_S)

    # The model key does what the option does; a run with a harmless implausible value completes.
    implausible = write(ctx, "implausible_tau_plus.toml", model_text(
        sim_extra="allow_implausible = true",
        extra='\n[pathway.drive_cell.plasticity]\nrule = "pair_stdp"\nw_max = "0.2 nA"\ntau_plus = "100 yr"\n'))
    code, _, _ = ck.case("run with [simulation] allow_implausible: tau_plus of 100 yr", ["run", implausible, "-o", out, "-q"],
                         status=0, texts=["warning:", "'tau_plus'"], timeout=QUICK_S)
    if os.path.exists(out):
        os.remove(out)
    strict = write(ctx, "strict_tau_plus.toml", model_text(
        extra='\n[pathway.drive_cell.plasticity]\nrule = "pair_stdp"\nw_max = "0.2 nA"\ntau_plus = "100 yr"\n'))
    ck.case("without the key, tau_plus of 100 yr is refused", ["run", strict, "-o", out],
            texts=["'tau_plus'", "allow_implausible"], output=out, timeout=QUICK_S)

    # Costly runs: validated with consent (running them would take hours).
    for name in ("cost_windows", "cost_input_spikes", "cost_trace_values", "cost_weight_values"):
        ck.case(f"check --allow-large-run limits_{name}", ["check", corpus_model(ctx, name), "--allow-large-run"],
                status=0, absent=("error", "internal error"), timeout=QUICK_S)
    large = write(ctx, "large_run_key.toml", model_text(duration="2000 s", delay="1 us",
                                                        sim_extra="allow_large_run = true"))
    ck.case("check with [simulation] allow_large_run", ["check", large], status=0, absent=("error",), timeout=QUICK_S)
    ck.case("allow_large_run must be true or false",
            ["check", write(ctx, "large_run_text.toml", model_text(sim_extra='allow_large_run = "yes"'))],
            texts=["'allow_large_run'", "expected true or false"], timeout=QUICK_S)
    ck.case("--allow-large-run cannot count 2^53 windows",
            ["check", corpus_model(ctx, "cost_windows_uncountable"), "--allow-large-run"], texts=["2^53"],
            timeout=QUICK_S)


def dotted(part, n):
    return ".".join([part] * n)


def nesting_cases(ck, ctx):
    head = '[simulation]\nduration = "1 s"\n'
    for depth in (10_000, 100_000):
        shapes = {
            "arrays": head + "x = " + "[" * depth + "]" * depth + "\n",
            "inline tables": head + "x = " + "{a = " * depth + "1" + "}" * depth + "\n",
            "table header": head + "[" + dotted("a", depth) + "]\nb = 1\n",
            "dotted key": head + dotted("a", depth) + " = 1\n",
        }
        for shape, text in shapes.items():
            path = write(ctx, f"nested_{shape.replace(' ', '_')}_{depth}.toml", text)
            for command in (["check", path], ["run", path, "-o", ck.output]):
                ck.case(f"{command[0]}: {shape} nested {depth} deep", command, texts=[f"{path}:3:"],
                        output=ck.output if command[0] == "run" else None, timeout=QUICK_S)
    # Within both parsers' bounds but deeper than nvsyn converts: 250 inline tables of 16-part keys.
    text = head + "x = " + ("{" + dotted("k", 16) + " = ") * 250 + "1" + "}" * 250 + "\n"
    path = write(ctx, "nested_keyed_inline_tables.toml", text)
    ck.case("inline tables with dotted keys nested 4,000 levels", ["check", path],
            texts=[f"{path}:3:", "nest more than 64 levels"], timeout=QUICK_S)


def long_list_cases(ck, ctx):
    # 10^6 recorded neurons sampled 1001 times: beyond 10^9 trace values without consent.
    neurons = ", ".join(["0"] * 1_000_000)
    path = write(ctx, "long_trace_list.toml", model_text(
        duration="1 s", extra=f'\n[record.trace.v]\npopulation = "cell"\nneurons = [{neurons}]\ninterval = "1 ms"\n'))
    ck.case("a trace over a list of 10^6 neurons", ["check", path],
            texts=["'interval'", "the traces would record", "allow_large_run"], timeout=QUICK_S)

    def listed(name, rows, header="pre,post"):
        csv = os.path.join(ctx.scratch, f"{name}.csv")
        with open(csv, "w", encoding="utf-8") as f:
            f.write(header + "\n" + "".join(rows))
        model = write(ctx, f"{name}.toml", model_text(wiring=f'wiring = "list"\nfile = "{name}.csv"'))
        return model, csv

    # 200,000 valid rows, then neuron 2^32: the last row is named, nothing wraps.
    model, csv = listed("list_long_then_2pow32", ["0,1\n"] * 200_000 + ["4294967296,0\n"])
    ck.case("connection list: index 2^32 after 200,000 rows", ["check", model],
            texts=[f"{csv}:200002:", "'pre'", "index 4294967296 is outside"], timeout=QUICK_S)
    model, csv = listed("list_post_2pow32", ["0,4294967296\n"])
    ck.case("connection list: post index 2^32", ["check", model], texts=[f"{csv}:2:", "'post'", "4294967296"],
            timeout=QUICK_S)
    model, csv = listed("list_index_2pow64", ["18446744073709551616,0\n"])
    ck.case("connection list: index 2^64", ["check", model], texts=[f"{csv}:2:", "'pre'", "not a neuron index"],
            timeout=QUICK_S)
    model, csv = listed("list_delay_femtosecond", ["0,1,1e9\n", "1,0,1\n"], header="pre,post,delay [fs]")
    ck.case("connection list: delay of 1 fs", ["run", model, "-o", ck.output],
            texts=[f"{csv}:3:", "'delay'", "outside the plausible range of a delay", "row 3"], output=ck.output,
            timeout=QUICK_S)
    # Accepted on purpose: a bounded number of warnings, the rest counted.
    model, csv = listed("list_many_implausible_delays", ["0,1,0.5\n"] * 1000, header="pre,post,delay [us]")
    code, _, stderr = ck.case("connection list: 1000 implausible delays with --allow-implausible",
                              ["check", model, "--allow-implausible"], status=0,
                              texts=[f"{csv}:2:", "warning: 'delay'",
                                     "980 more implausible values accepted"], timeout=QUICK_S)
    ck.report("connection list: warnings are bounded",
              [] if stderr.count("warning:") == 21 else [f"{stderr.count('warning:')} warnings, expected 20 + 1"])
    model, csv = listed("list_weight_overflow", ["0,1,1e300\n"], header="pre,post,weight [TA]")
    ck.case("connection list: weight of 1e300 TA", ["check", model],
            texts=[f"{csv}:2:", "'weight'", "not a finite number in SI units"], timeout=QUICK_S)


def index_cases(ck, ctx):
    path = write(ctx, "weights_synapse_2pow32.toml", model_text(
        extra='\n[record.weights.w]\npathway = "drive_cell"\nsynapses = [4294967296]\ninterval = "1 ms"\n'))
    ck.case("weight recording of synapse 2^32", ["check", path], texts=["'synapses'", "synapse 4294967296 does not exist"],
            timeout=QUICK_S)
    path = write(ctx, "weights_synapse_2pow63.toml", model_text(
        extra='\n[record.weights.w]\npathway = "drive_cell"\nsynapses = [9223372036854775807]\ninterval = "1 ms"\n'))
    ck.case("weight recording of synapse 2^63 - 1", ["check", path], texts=["'synapses'", "does not exist"],
            timeout=QUICK_S)


def option_cases(ck, ctx):
    out = ck.output
    valid = ctx.valid_model
    ck.case("--duration of 1e300 s", ["run", valid, "-o", out, "--duration", "1e300 s"],
            texts=["'--duration'", "outside the plausible range of a duration"], output=out, timeout=QUICK_S)
    ck.case("--duration of 1e300 s with --allow-implausible: too many windows to count",
            ["run", valid, "-o", out, "--duration", "1e300 s", "--allow-implausible"],
            texts=["'--duration'", "2^53"], output=out, timeout=QUICK_S)
    ck.case("--duration of 1e400 s", ["run", valid, "-o", out, "--duration", "1e400 s"],
            texts=["'--duration'", "too large or too small"], output=out, timeout=QUICK_S)
    tiny_delay = write(ctx, "tiny_delay.toml", model_text(delay="1 us"))
    ck.case("--duration of 3000 s over 1 us windows", ["run", tiny_delay, "-o", out, "--duration", "3000 s"],
            texts=["'--duration'", "windows", "allow_large_run"], output=out, timeout=QUICK_S)

    weights = write(ctx, "weights.csv", "# unit: nA\n0.1,0.2\n0.05,0\n")
    base = ["map-weights", weights, "--preset", "finite_levels"]
    ck.case("map-weights --weight-max of 1e-300 nA (once an internal stod error)", base + ["--weight-max", "1e-300 nA"],
            texts=["'--weight-max'", "too small to represent"], timeout=QUICK_S)
    ck.case("map-weights --weight-max of 1e-20 nA", base + ["--weight-max", "1e-20 nA"],
            texts=["'--weight-max'", "outside the plausible range of a weight scale"], timeout=QUICK_S)
    ck.case("map-weights --gain of 1e-300 V", base + ["--gain", "1e-300 V"],
            texts=["'--gain'", "outside the plausible range of a gain"], timeout=QUICK_S)
    ck.case("map-weights --times of 1e5 yr", base + ["--weight-max", "0.2 nA", "--times", "0 s,1e5 yr"],
            texts=["'--times'", "outside the plausible range of a time"], timeout=QUICK_S)
    ck.case("map-weights --tolerance of 1e300 TA", base + ["--weight-max", "0.2 nA", "--tolerance", "1e300 TA"],
            texts=["'--tolerance'", "not a finite number in SI units"], timeout=QUICK_S)
    overflow = write(ctx, "weights_overflow.csv", "# unit: TA\n0,1e300\n")
    ck.case("map-weights: a weight of 1e300 TA", ["map-weights", overflow, "--preset", "finite_levels",
                                                  "--weight-max", "0.2 nA"],
            texts=[overflow, "row 1, column 2", "not a finite number in SI units"], timeout=QUICK_S)
    ck.case("device --read-delays of 1e5 yr", ["device", "finite_levels", "--read-delays", "1 s,1e5 yr"],
            texts=["'--read-delays'", "outside the plausible range of a time"], timeout=QUICK_S)
