"""One checker for every bad-input case: runs nvsyn, compares the exit status and the
message with what the case expects, and checks that nothing is left behind.

A case fails if nvsyn crashes (killed by a signal), hangs (no exit within the case's
timeout), exits with another status, misses an expected text on stderr, prints
"internal error" where a located user error is expected, or leaves a file at the
output path (or a half-written `<out>.partial-*` beside it).
"""
import glob
import hashlib
import os
import shutil
import subprocess

USER_ERROR = 2
DEFAULT_TIMEOUT_S = 60


def file_digest(path):
    """SHA-256 of a file's bytes, or None if it does not exist."""
    if not os.path.exists(path):
        return None
    with open(path, "rb") as f:
        return hashlib.sha256(f.read()).hexdigest()


class Checker:
    def __init__(self, nvsyn, scratch):
        self.nvsyn = nvsyn
        self.scratch = scratch
        self.output = os.path.join(scratch, "out.h5")
        self.passed = 0
        self.failed = 0
        self.skipped = 0

    def run(self, args, timeout=DEFAULT_TIMEOUT_S, stdin=subprocess.DEVNULL):
        """(status or None on timeout, stdout, stderr) of `nvsyn args`."""
        try:
            p = subprocess.run([self.nvsyn, *args], capture_output=True, text=True, errors="replace",
                               timeout=timeout, stdin=stdin)
            return p.returncode, p.stdout, p.stderr
        except subprocess.TimeoutExpired:
            return None, "", ""

    @staticmethod
    def leftovers(output):
        """Files at the output path or half-written siblings of it."""
        found = [output] if os.path.lexists(output) else []
        found += glob.glob(glob.escape(output) + ".partial-*")
        return found

    def case(self, name, args, status=USER_ERROR, texts=(), absent=("internal error",),
             output=None, keep_output=(), unchanged=(), timeout=DEFAULT_TIMEOUT_S):
        """Runs nvsyn with `args` and records whether every expectation held.

        texts: strings stderr must contain; absent: strings it must not contain.
        output: the path given with -o, which must hold nothing afterwards unless
        listed in keep_output (something that existed before).
        unchanged: files whose bytes must be the same after the run as before it.
        Returns (status, stdout, stderr) for further checks by the caller.
        """
        before = {path: file_digest(path) for path in unchanged}
        code, stdout, stderr = self.run(args, timeout)
        problems = []
        if code is None:
            problems.append(f"no exit within {timeout} s")
        elif code != status:
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
        for path, digest in before.items():
            if file_digest(path) != digest:
                problems.append(f"{path} was changed")
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
        return code, stdout, stderr

    def report(self, name, problems, detail=""):
        if problems:
            self.failed += 1
            print(f"FAIL {name}: {'; '.join(problems)}")
            for line in detail.strip().splitlines()[:20]:
                print(f"     | {line}")
        else:
            self.passed += 1
            print(f"ok   {name}")

    def skip(self, name, why):
        self.skipped += 1
        print(f"skip {name}: {why}")


def expected_texts(path, expect):
    """What stderr must hold for a file that states its expectations (expectations.py)."""
    texts = [expect["text"]]
    texts.append(f"{path}:{expect['line']}:" if "line" in expect else path)
    if "key" in expect:
        texts.append(f"'{expect['key']}'")
    return texts
