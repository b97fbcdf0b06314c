#!/usr/bin/python3
"""The bad-input corpus: every hostile or malformed input nvsyn is known to meet,
each with its expected exit status and message, run as one CTest test.

Usage: run_corpus.py NVSYN SCRATCH_DIR

Cases live in the cases_*.py modules beside this file, one module per class of
input; each has `cases(ck, ctx)` and calls `ck.case(...)` (checker.py) per case.
The last line printed is "N passed, M failed".
"""
import importlib
import os
import shutil
import sys
from pathlib import Path
from types import SimpleNamespace

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
from checker import Checker  # noqa: E402

MODULES = [
    "cases_models",       # malformed model files, files they name, command lines of run/check
    "cases_fit",          # pulse data, presets and options of fit-device
    "cases_files",        # outputs that would destroy inputs, special and oversized files, HDF5 size claims
    "cases_limits",       # plausible ranges, memory and run-cost limits with their consent, nesting, 2^32 indices
    "cases_numerics",     # non-finite states during a run, long silences, Ctrl-C in slow learning, window counts
]


def main(argv):
    if len(argv) != 3:
        print(__doc__)
        return 2
    nvsyn, scratch = os.path.abspath(argv[1]), os.path.abspath(argv[2])
    if os.path.exists(scratch):
        for root, dirs, _ in os.walk(scratch):  # undo chmod 000 from an interrupted run
            for d in dirs:
                os.chmod(os.path.join(root, d), 0o755)
        shutil.rmtree(scratch)
    os.makedirs(scratch)
    ctx = SimpleNamespace(corpus=HERE, repo=HERE.parents[1], scratch=scratch,
                          valid_model=str(HERE.parents[1] / "models" / "single_neuron.toml"))
    ck = Checker(nvsyn, scratch)
    for name in MODULES:
        print(f"-- {name}")
        importlib.import_module(name).cases(ck, ctx)
    if ck.skipped:
        print(f"({ck.skipped} skipped)")
    print(f"{ck.passed} passed, {ck.failed} failed")
    return 1 if ck.failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
