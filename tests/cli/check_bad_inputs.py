#!/usr/bin/python3
"""Bad input must fail cleanly: exit status 2, a message naming file, line and key,
no crash, and nothing left at the output path (DESIGN.md, "Errors").

Usage: check_bad_inputs.py NVSYN BAD_MODELS_DIR SCRATCH_DIR

Every *.toml in BAD_MODELS_DIR is a broken model whose leading comments state
what the error must say:
    # expect-file: x.csv     (optional) the error is located in this file, beside the model
    # expect-line: 12        (optional) the message contains "<file>:12:"
    # expect-key: tau_m      (optional) the message contains "'tau_m'"
    # expect-text: ...       (required) the message contains this text
Each is given to `nvsyn run FILE -o SCRATCH/out.h5` and to `nvsyn check FILE`.
Cases that cannot be written as a file (missing or unreadable model, bad output
path, bad command-line values) follow. The last line printed is "N passed, M failed".
"""
import glob
import os
import shutil
import subprocess
import sys
from pathlib import Path

sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
from bad_input_expectations import read_expectations  # noqa: E402

TIMEOUT_S = 60
USER_ERROR = 2


class Checker:
    def __init__(self, nvsyn, scratch):
        self.nvsyn = nvsyn
        self.scratch = scratch
        self.output = os.path.join(scratch, "out.h5")
        self.passed = 0
        self.failed = 0
        self.skipped = 0

    def leftovers(self, output):
        """Files at the output path or half-written siblings of it."""
        found = [output] if os.path.lexists(output) else []
        found += glob.glob(glob.escape(output) + ".partial-*")
        return found

    def case(self, name, args, status=USER_ERROR, texts=(), absent=("internal error",),
             output=None, keep_output=()):
        """Runs nvsyn with `args` and records whether every expectation held.

        texts: strings stderr must contain; absent: strings it must not contain.
        output: the path given with -o, which must hold nothing afterwards
        unless listed in keep_output (a folder that existed before).
        """
        problems = []
        try:
            proc = subprocess.run([self.nvsyn, *args], capture_output=True, text=True,
                                  errors="replace", timeout=TIMEOUT_S)
            code, stderr = proc.returncode, proc.stderr
        except subprocess.TimeoutExpired:
            code, stderr = None, ""
            problems.append(f"no exit within {TIMEOUT_S} s")
        if code is not None and code != status:
            what = f"killed by signal {-code}" if code < 0 else f"exit status {code}"
            problems.append(f"{what}, expected {status}")
        for text in texts:
            if text not in stderr:
                problems.append(f"stderr lacks {text!r}")
        for text in absent:
            if text in stderr:
                problems.append(f"stderr contains {text!r}")
        if status == USER_ERROR and "error:" not in stderr:
            problems.append("stderr has no 'error:' message")
        if output is not None:
            left = [p for p in self.leftovers(output) if p not in keep_output]
            if left:
                problems.append(f"left behind: {', '.join(left)}")
                for p in left:
                    if os.path.isdir(p) and not os.path.islink(p):
                        shutil.rmtree(p)
                    else:
                        os.remove(p)
        self.report(name, problems, stderr)

    def report(self, name, problems, stderr=""):
        if problems:
            self.failed += 1
            print(f"FAIL {name}: {'; '.join(problems)}")
            for line in stderr.strip().splitlines():
                print(f"     | {line}")
        else:
            self.passed += 1
            print(f"ok   {name}")

    def skip(self, name, why):
        self.skipped += 1
        print(f"skip {name}: {why}")


def model_cases(checker, bad_models):
    models = sorted(glob.glob(os.path.join(bad_models, "*.toml")))
    if not models:
        checker.report("bad models present", [f"no *.toml in {bad_models}"])
    for model in models:
        name = os.path.basename(model)
        expect = read_expectations(model)
        if "text" not in expect:
            checker.report(name, ["the file states no '# expect-text:'"])
            continue
        located_in = os.path.join(os.path.dirname(model), expect["file"]) if "file" in expect else model
        texts = [expect["text"]]
        if "line" in expect:
            texts.append(f"{located_in}:{expect['line']}:")
        else:
            texts.append(located_in)
        if "key" in expect:
            texts.append(f"'{expect['key']}'")
        checker.case(f"run   {name}", ["run", model, "-o", checker.output], texts=texts,
                     output=checker.output)
        checker.case(f"check {name}", ["check", model], texts=texts)


def special_cases(checker, valid_model):
    scratch, out = checker.scratch, checker.output

    # Control: the valid model runs, so failures below come from the fault under test.
    control_out = os.path.join(scratch, "control.h5")
    checker.case("control: valid model runs", ["run", valid_model, "-o", control_out, "-q"],
                 status=0, absent=("error",))
    if os.path.exists(control_out):
        os.remove(control_out)

    missing = os.path.join(scratch, "no_such_folder", "model.toml")
    checker.case("model path does not exist", ["run", missing, "-o", out],
                 texts=[missing, "cannot read the model file"], output=out)
    checker.case("check: model path does not exist", ["check", missing],
                 texts=[missing, "cannot read the model file"])

    checker.case("model path is a folder", ["run", scratch, "-o", out],
                 texts=[scratch, "is a folder"], output=out)

    # A folder whose name looks like a model file: unreadable as a file, even for root.
    dir_model = os.path.join(scratch, "folder_model.toml")
    os.mkdir(dir_model)
    checker.case("model path is a folder named *.toml", ["check", dir_model],
                 texts=[dir_model, "is a folder"])

    locked = os.path.join(scratch, "locked.toml")
    shutil.copyfile(valid_model, locked)
    os.chmod(locked, 0)
    try:
        readable = True
        with open(locked, "rb"):
            pass
    except PermissionError:
        readable = False
    if readable:
        checker.skip("model file without read permission",
                     "running with privileges that ignore file modes (root?); "
                     "the folder-named-*.toml case above covers an unreadable model")
    else:
        checker.case("model file without read permission", ["run", locked, "-o", out],
                     texts=[locked, "cannot read the model file", "Permission denied"], output=out)
    os.chmod(locked, 0o644)

    for bad_out in (os.path.join(scratch, "no_such_folder", "out.h5"), "/nonexistent/dir/out.h5"):
        checker.case(f"output folder missing ({bad_out})", ["run", valid_model, "-o", bad_out],
                     texts=[bad_out, "'-o'", "does not exist"], output=bad_out)

    out_dir = os.path.join(scratch, "existing_folder")
    os.mkdir(out_dir)
    checker.case("output path is an existing folder", ["run", valid_model, "-o", out_dir],
                 texts=[out_dir, "'-o'", "is a folder"], output=out_dir, keep_output=(out_dir,))
    if not os.path.isdir(out_dir) or os.listdir(out_dir):
        checker.report("output folder left untouched", [f"{out_dir} was changed"])

    for value, text in (("5 nS", "is a conductance, expected a time"),
                        ("abc", "does not start with a number"),
                        ("0 s", "must be positive"),
                        ("2", "has no unit")):
        checker.case(f"--duration {value!r}", ["run", valid_model, "-o", out, "--duration", value],
                     texts=["'--duration'", text], output=out)

    # Command-line parse errors (CLI11) are user errors too.
    checker.case("unknown subcommand", ["simulate", valid_model], texts=["simulate"])
    checker.case("unknown option", ["run", valid_model, "-o", out, "--speed", "3"],
                 texts=["--speed"], output=out)
    checker.case("run without -o", ["run", valid_model], texts=["--output"])
    checker.case("--seed not a number", ["run", valid_model, "-o", out, "--seed", "abc"],
                 texts=["abc"], output=out)
    checker.case("no subcommand", [], texts=["subcommand"])


def main(argv):
    if len(argv) != 4:
        print(__doc__)
        return 2
    nvsyn, bad_models, scratch = os.path.abspath(argv[1]), os.path.abspath(argv[2]), os.path.abspath(argv[3])
    valid_model = str(Path(__file__).resolve().parents[2] / "models" / "single_neuron.toml")
    if os.path.exists(scratch):
        for root, dirs, _ in os.walk(scratch):  # undo chmod 000 from an interrupted run
            for d in dirs:
                os.chmod(os.path.join(root, d), 0o755)
        shutil.rmtree(scratch)
    os.makedirs(scratch)

    checker = Checker(nvsyn, scratch)
    model_cases(checker, bad_models)
    special_cases(checker, valid_model)
    if checker.skipped:
        print(f"({checker.skipped} skipped)")
    print(f"{checker.passed} passed, {checker.failed} failed")
    return 1 if checker.failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
