"""Malformed model files (models/*.toml, each stating in its leading comments what
the error must say; see expectations.py), missing or unreadable files, bad output
paths and bad command lines of `nvsyn run` and `nvsyn check`: exit status 2, a
message naming file, line and key, and nothing left at the output path.
"""
import glob
import os
import shutil

from expectations import read_expectations


def cases(ck, ctx):
    model_cases(ck, ctx.corpus)
    special_cases(ck, ctx.valid_model)


def model_cases(checker, bad_models):
    models = sorted(glob.glob(os.path.join(bad_models, "models", "*.toml")))
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
