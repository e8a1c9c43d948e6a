"""checklib.py — what the Python checks of tests/ share: a counter of
checks that prints each failure, the closing 'N passed, N failed' line with
the exit status, and runners for the nervegap binary."""
import os
import pty
import subprocess
import sys

_counts = {"checks": 0, "failures": 0}


def expect(name, cond, detail=""):
    """Counts one check; prints it when cond is false."""
    _counts["checks"] += 1
    if not cond:
        _counts["failures"] += 1
        print(f"FAIL {name} {detail}")


def finish():
    """Prints the closing line and exits 1 when any check failed."""
    failed = _counts["failures"]
    print(f"{_counts['checks'] - failed} passed, {failed} failed")
    sys.exit(1 if failed else 0)


def nervegap(binary, *args, timeout=300):
    """Runs the binary with args and returns its stdout; raises on failure."""
    p = subprocess.run([binary, *args], capture_output=True, text=True, timeout=timeout)
    if p.returncode != 0:
        raise RuntimeError(p.stderr)
    return p.stdout


def pty_run(args):
    """Runs args with stderr on a pseudo-terminal; returns (code, stderr)."""
    master, slave = pty.openpty()
    p = subprocess.Popen(args, stdout=subprocess.DEVNULL, stderr=slave, stdin=subprocess.DEVNULL)
    os.close(slave)
    seen = b""
    while True:
        try:
            chunk = os.read(master, 4096)
        except OSError:
            break
        if not chunk:
            break
        seen += chunk
    p.wait()
    os.close(master)
    return p.returncode, seen.decode(errors="replace")
