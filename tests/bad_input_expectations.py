"""The expectations that a malformed input file states about itself, shared by the
bad-input checks (tests/cli/check_bad_inputs.py, tests/devices/check_fit_inputs.py)."""


def read_expectations(path):
    """The "# expect-<what>: <value>" lines among the file's leading comments."""
    expect = {}
    with open(path, encoding="utf-8", errors="replace") as f:
        for line in f:
            if not line.startswith("#"):
                break
            body = line[1:].strip()
            if body.startswith("expect-") and ":" in body:
                what, value = body.split(":", 1)
                expect[what[len("expect-"):]] = value.strip()
    return expect
