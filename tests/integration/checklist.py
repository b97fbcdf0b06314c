"""Shared ending of the integration checks: one line per check, then the
'N passed, M failed' line that CI reads; the exit status says whether all passed."""


def report(results):
    """results: list of (description, passed). Returns the process exit status."""
    for name, ok in results:
        print(f"{'ok  ' if ok else 'FAIL'} {name}")
    failed = sum(not ok for _, ok in results)
    print(f"{len(results) - failed} passed, {failed} failed")
    return 1 if failed else 0
