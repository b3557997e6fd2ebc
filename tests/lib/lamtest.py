"""TAP output and program runner for the Python tests (run by prove)."""
import importlib.util
import os
import subprocess
import tempfile
import sysconfig
import sys


def require_references(*modules):
    """Skip the whole test file (TAP "1..0 # SKIP") when an independent
    reference is not installed.  Under CI (LAM_REQUIRE_REFS=1) a missing
    reference is a failure instead, so that a skipped check never passes
    for a checked one."""
    missing = [m for m in modules if not _importable(m)]
    if not missing:
        return
    reason = "independent reference missing: %s (Debian: make deps-test)" % ", ".join(missing)
    if os.environ.get("LAM_REQUIRE_REFS") == "1":
        print("Bail out! " + reason)
        sys.exit(1)
    print("1..0 # SKIP " + reason)
    sys.exit(0)


def _importable(module):
    if module == "psi4":
        # Debian installs psi4 in the multiarch directory, off sys.path.
        arch = sysconfig.get_config_var("MULTIARCH") or ""
        return os.path.isdir(os.path.join("/usr/lib", arch, "psi4"))
    return importlib.util.find_spec(module) is not None

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
BIN = os.environ.get("LAM_BIN", os.path.join(ROOT, "bin"))
WRAP = os.environ.get("LAM_WRAP", "").split()


class Tap:
    def __init__(self):
        self.n = 0
        self.failed = 0

    def ok(self, cond, name, diag=None):
        self.n += 1
        if not cond:
            self.failed += 1
        print("%sok %d - %s" % ("" if cond else "not ", self.n, name))
        if not cond and diag:
            for line in str(diag).splitlines():
                print("#   " + line)
        sys.stdout.flush()
        return cond

    def near(self, got, want, tol, name, rel=False):
        scale = abs(want) if rel and want != 0 else 1.0
        ok = got is not None and abs(got - want) <= tol * scale
        return self.ok(ok, name, "got %r, want %r (tol %g%s)" %
                       (got, want, tol, " relative" if rel else ""))

    def done(self):
        print("1..%d" % self.n)
        sys.exit(1 if self.failed else 0)


def run(prog, args=(), stdin=None, check=False):
    """Run bin/prog; returns (exit code, stdout, stderr) as text."""
    cmd = WRAP + [os.path.join(BIN, prog)] + list(args)
    p = subprocess.run(cmd, input=stdin, capture_output=True,
                       text=isinstance(stdin, str) or stdin is None)
    if check and p.returncode != 0:
        raise RuntimeError("%s failed (%d): %s" % (prog, p.returncode, p.stderr))
    return p.returncode, p.stdout, p.stderr


def run_with_report(prog, args=(), stdin=None):
    """Run bin/prog ARGS -r FILE; returns (exit code, stdout, stderr, the
    report as a dict).  The report is read by its name after the run: the
    program puts a new file at that name (written whole, then renamed), so
    a handle opened before the run would still show the old one."""
    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, "report")
        code, out, err = run(prog, list(args) + ["-r", path], stdin=stdin)
        text = open(path).read() if os.path.exists(path) else ""
    return code, out, err, report(text)


def pipe(*stages, stdin=None):
    """Run stages [(prog, args), ...] as a pipeline, each checked."""
    data = stdin
    for prog, args in stages:
        data = run(prog, args, stdin=data, check=True)[1]
    return data


def report(text):
    """key<TAB>value report -> dict (sector lines collected in a list)."""
    out = {}
    for line in text.splitlines():
        if not line or line.startswith("#"):
            continue
        key, _, value = line.partition("\t")
        if key == "sector":
            out.setdefault("sector", []).append(value)
            continue
        try:
            out[key] = float(value) if value not in ("exact", "bound") else value
        except ValueError:
            out[key] = value
    return out
