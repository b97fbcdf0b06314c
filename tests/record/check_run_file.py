#!/usr/bin/python3
"""Check a run file against layout version 1 (src/record/LAYOUT.md) and against the
table that `nvsyn summary` printed for it.

    /usr/bin/python3 check_run_file.py RUN_FILE SUMMARY_TEXT_FILE

Checks, all reported together:
  * root attributes: layout "nvsyn-run", layout_version 1, the other required ones,
    a known status, and time_reached once the run has ended;
  * every dataset that holds a quantity has a `units` attribute with an SI symbol
    (index datasets - neuron, pre, post, synapse - are unsigned integers instead),
    and the datasets whose quantity the layout fixes carry exactly that unit;
  * per population in /spikes: time and neuron of equal length, times ascending,
    neuron indices below the population's size;
  * the summary table lists exactly the populations in /spikes, with their neuron
    and spike counts, and its rate_hz and cv_isi agree with values computed here
    independently (numpy) to the precision the table prints.

The summary table is found by its header line, whose whitespace-separated fields
are exactly `population neurons spikes rate_hz cv_isi`; its rows are the non-blank
lines right after it, up to the first blank line or the end of the text, each with
exactly five fields. Text before the header or after that blank line is ignored.

Exit status 0 when everything holds, 1 with one line per failure otherwise,
2 when the arguments are wrong. Needs Debian's h5py, hence /usr/bin/python3.
"""
import math
import sys

import h5py
import numpy as np

SUMMARY_HEADER = ["population", "neurons", "spikes", "rate_hz", "cv_isi"]
SI_SYMBOLS = {"1", "s", "V", "A", "S", "F", "Ohm", "Hz", "J", "C"}
INDEX_DATASETS = {"neuron", "pre", "post", "synapse"}
STATUSES = {"running", "complete", "interrupted", "failed"}
REQUIRED_ROOT_ATTRS = ["layout", "layout_version", "nvsyn_version", "created", "seed", "status",
                       "duration", "model", "model_file"]


def text(value):
    """Attribute strings come back as str (variable length) or bytes (fixed length)."""
    return value.decode("utf-8") if isinstance(value, bytes) else str(value)


def fixed_unit(path):
    """The unit the layout prescribes for a dataset, or None where it depends on the data."""
    parts = path.strip("/").split("/")
    if parts[0] == "spikes" and parts[-1] == "time":
        return "s"
    if parts[0] == "pathways" and parts[-1] == "delay":
        return "s"
    if parts[0] == "pathways" and parts[-1] == "weight":
        return "A"
    if parts[0] == "traces" and parts[-1] == "time":
        return "s"
    return None


def check_root(f, failures):
    for name in REQUIRED_ROOT_ATTRS:
        if name not in f.attrs:
            failures.append(f"root attribute '{name}' is missing")
    if "layout" in f.attrs and text(f.attrs["layout"]) != "nvsyn-run":
        failures.append(f"root attribute 'layout' is {text(f.attrs['layout'])!r}, expected 'nvsyn-run'")
    if "layout_version" in f.attrs and int(f.attrs["layout_version"]) != 1:
        failures.append(f"root attribute 'layout_version' is {f.attrs['layout_version']}, expected 1")
    status = text(f.attrs["status"]) if "status" in f.attrs else None
    if status is not None and status not in STATUSES:
        failures.append(f"root attribute 'status' is {status!r}, not one of {sorted(STATUSES)}")
    if status is not None and status != "running" and "time_reached" not in f.attrs:
        failures.append(f"status is {status!r} but root attribute 'time_reached' is missing")


def check_units(f, failures):
    def visit(name, obj):
        if not isinstance(obj, h5py.Dataset):
            return
        path = "/" + name
        leaf = name.rsplit("/", 1)[-1]
        if leaf in INDEX_DATASETS:
            if obj.dtype != np.uint32:
                failures.append(f"{path}: index dataset has type {obj.dtype}, expected uint32")
            return
        if "units" not in obj.attrs:
            failures.append(f"{path}: quantity dataset has no 'units' attribute")
            return
        units = text(obj.attrs["units"])
        if units not in SI_SYMBOLS:
            failures.append(f"{path}: units {units!r} is not one of {sorted(SI_SYMBOLS)}")
        expected = fixed_unit(path)
        if expected is not None and units != expected:
            failures.append(f"{path}: units {units!r}, expected {expected!r}")

    f.visititems(visit)


def population_statistics(times, neurons, size, duration):
    """Rate and mean CV of inter-spike intervals, as defined in spike_statistics.hpp,
    computed here with numpy rather than nvsyn's one-pass code."""
    rate = len(times) / (size * duration) if size > 0 and duration > 0 else math.nan
    order = np.argsort(neurons, kind="stable")  # keeps each neuron's times ascending
    sorted_neurons = neurons[order]
    sorted_times = times[order]
    boundaries = np.flatnonzero(np.diff(sorted_neurons)) + 1
    cvs = []
    for train in np.split(sorted_times, boundaries):
        if len(train) < 3:
            continue
        intervals = np.diff(train)
        mean = intervals.mean()
        if mean <= 0:
            continue
        cvs.append(intervals.std(ddof=0) / mean)
    cv = float(np.mean(cvs)) if cvs else math.nan
    return rate, cv


def check_spikes(f, failures):
    """Returns {population: (size, spike count, rate, cv)} for the summary comparison."""
    duration = float(f.attrs["time_reached"]) if "time_reached" in f.attrs else None
    stats = {}
    for pop, group in f["spikes"].items():
        where = f"/spikes/{pop}"
        if f"populations/{pop}" not in f:
            failures.append(f"{where}: no matching /populations/{pop}")
            continue
        size = int(f["populations"][pop].attrs["size"])
        times = group["time"][...]
        neurons = group["neuron"][...]
        if times.shape != neurons.shape:
            failures.append(f"{where}: time has shape {times.shape} but neuron has {neurons.shape}")
            continue
        if times.size > 1 and not np.all(np.diff(times) >= 0):
            first = int(np.argmax(np.diff(times) < 0)) + 1
            failures.append(f"{where}/time is not ascending: entry {first} is {times[first]} "
                            f"after {times[first - 1]}")
        if neurons.size > 0 and int(neurons.max()) >= size:
            failures.append(f"{where}/neuron holds index {int(neurons.max())}, but the population has {size} neurons")
        if duration is None:
            failures.append(f"{where}: no root attribute 'time_reached' to compute rates over")
            rate, cv = math.nan, math.nan
        else:
            rate, cv = population_statistics(times, neurons, size, duration)
        stats[pop] = (size, int(times.size), rate, cv)
    return stats


def parse_summary(summary_text, failures):
    lines = summary_text.splitlines()
    header = next((i for i, line in enumerate(lines) if line.split() == SUMMARY_HEADER), None)
    if header is None:
        failures.append(f"summary: no header line '{'  '.join(SUMMARY_HEADER)}'")
        return {}
    rows = {}
    for number, line in enumerate(lines[header + 1:], start=header + 2):
        if not line.strip():
            break
        fields = line.split()
        if len(fields) != len(SUMMARY_HEADER):
            failures.append(f"summary line {number}: expected {len(SUMMARY_HEADER)} fields, got {line!r}")
            continue
        rows[fields[0]] = fields[1:]
    return rows


def printed_resolution(field):
    """Half a unit in the last printed digit of a decimal number such as '12.5' or '1.25e-03'."""
    mantissa, _, exponent = field.lower().partition("e")
    decimals = len(mantissa.partition(".")[2])
    return 0.5 * 10.0 ** (int(exponent or 0) - decimals)


def agrees(field, expected):
    """True when the printed field is `expected` rounded to the digits shown."""
    try:
        shown = float(field)
    except ValueError:
        return False
    if math.isnan(expected) or math.isnan(shown):
        return math.isnan(expected) and math.isnan(shown)
    # Half a unit in the last place, plus room for the two programs' own rounding
    # of the same value when it falls on a rounding boundary.
    return abs(shown - expected) <= printed_resolution(field) * (1 + 1e-9) + 1e-12 * abs(expected)


def check_summary(stats, rows, failures):
    for pop in sorted(set(stats) - set(rows)):
        failures.append(f"summary: population '{pop}' has spikes in the run file but no row")
    for pop in sorted(set(rows) - set(stats)):
        failures.append(f"summary: row for '{pop}', which has no /spikes/{pop} in the run file")
    for pop in sorted(set(stats) & set(rows)):
        size, count, rate, cv = stats[pop]
        neurons_field, spikes_field, rate_field, cv_field = rows[pop]
        if neurons_field != str(size):
            failures.append(f"summary: '{pop}' has neurons {neurons_field}, run file says {size}")
        if spikes_field != str(count):
            failures.append(f"summary: '{pop}' has spikes {spikes_field}, run file holds {count}")
        if not agrees(rate_field, rate):
            failures.append(f"summary: '{pop}' has rate_hz {rate_field}, computed {rate!r}")
        if not agrees(cv_field, cv):
            failures.append(f"summary: '{pop}' has cv_isi {cv_field}, computed {cv!r}")


def main(argv):
    if len(argv) != 3:
        print("usage: check_run_file.py RUN_FILE SUMMARY_TEXT_FILE", file=sys.stderr)
        return 2
    run_path, summary_path = argv[1], argv[2]
    failures = []
    with open(summary_path, encoding="utf-8") as summary_file:
        summary_text = summary_file.read()
    with h5py.File(run_path, "r") as f:
        check_root(f, failures)
        check_units(f, failures)
        for group in ("populations", "spikes", "pathways", "traces"):
            if group not in f:
                failures.append(f"group /{group} is missing")
        stats = check_spikes(f, failures) if "spikes" in f else {}
    check_summary(stats, parse_summary(summary_text, failures), failures)
    for failure in failures:
        print(f"{run_path}: {failure}")
    if not failures:
        print(f"{run_path}: layout and summary checks passed ({len(stats)} populations)")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
