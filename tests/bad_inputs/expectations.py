"""The expectations that a malformed input file states about itself, in its leading
comments (used by the bad-input corpus, tests/bad_inputs/run_corpus.py):
    # expect-file: x.csv     (optional) the error is located in this file, beside it
    # expect-line: 12        (optional) the message contains "<file>:12:"
    # expect-key: tau_m      (optional) the message contains "'tau_m'"
    # expect-text: ...       (required) the message contains this text
    # expect-model: KIND     (pulse data only) the --model given to fit-device
"""


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
