#!/usr/bin/python3
"""study-ref.t - the example study (examples/study) end to end, SMALL setting.

Runs `make -C examples/study SMALL=1` into a temporary directory with the
programs under test and checks the joined table: one row per molecule x
geometry x representation target, and on every row the one-norm is at
least the floors (fact of the trade, common practice: for any LCU of A,
lambda >= ||A - sI|| >= DeltaE(A)/2; the N-electron half range of H is
below the Fock-space half range of both H and H - K).  The rotated rows
(lam-rotate, then the same shift, map and grouping) are never above their
canonical counterparts: lam-rotate keeps the canonical start unless it
finds better for its objective, and that objective is exactly the shifted
(grouped) lambda that the pipeline after it computes.
"""
import math
import os
import shutil
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402

t = lamtest.Tap()
study = os.path.join(lamtest.ROOT, "examples", "study")
out = tempfile.mkdtemp(prefix="lam-study-")
env = dict(os.environ, LAM_BIN=lamtest.BIN, OPENBLAS_NUM_THREADS="1")
make = ["make", "--no-print-directory", "-s", "-C", study, "SMALL=1", "OUT=" + out,
        "LAM_BIN=" + lamtest.BIN]

p = subprocess.run(make + ["-j2"], env=env, capture_output=True, text=True)
t.ok(p.returncode == 0, "make SMALL=1 runs end to end", p.stderr[-3000:])

targets = subprocess.run(make + ["targets"], env=env, capture_output=True,
                         text=True).stdout.split("\n")
want = sorted(tuple(line.split()) for line in targets if line.strip())
t.ok(len(want) >= 12, "the SMALL setting has targets (%d)" % len(want))



def read_tsv(name):
    """The rows of a study table in OUT as dicts by header (none if absent)."""
    path = os.path.join(out, name)
    if not os.path.exists(path):
        return []
    with open(path) as f:
        lines = f.read().splitlines()
    header = lines[0].split("\t")
    return [dict(zip(header, line.split("\t"))) for line in lines[1:]]


rows = read_tsv("results.tsv")
got = sorted((r["molecule"], r["r_angstrom"], r["representation"]) for r in rows)
t.ok(got == want, "one row per target (%d rows, %d targets)" % (len(got), len(want)),
     "missing %s\nextra %s" % (sorted(set(want) - set(got)), sorted(set(got) - set(want))))
t.ok(len(set(got)) == len(got), "no target twice")

for r in rows:
    name = "%s R=%s %s" % (r["molecule"], r["r_angstrom"], r["representation"])
    lam, ffock, fn = float(r["lambda"]), float(r["floor_fock"]), float(r["floor_n"])
    t.ok(lam >= fn * (1 - 1e-9), "%s: lambda %.6f >= N-electron dE/2 %.6f" % (name, lam, fn))
    t.ok(lam >= ffock * (1 - 1e-9),
         "%s: lambda %.6f >= Fock-space dE/2 %.6f of its operator" % (name, lam, ffock))
    t.ok(ffock >= fn * (1 - 1e-9), "%s: Fock-space floor >= N-electron floor" % name)
    # Walk steps ceil(pi lambda / (2 eps.phase)) with eps.phase = 0.8 x the
    # study's 1.6 mEh (lam-cost's default split; Babbush et al., PRX 8,
    # 041015 (2018), from memory), lambda that of the construction's walk.
    t.ok(int(r["walk.steps"]) == math.ceil(math.pi * float(r["lambda.walk"]) / (2 * 0.8 * 0.0016)),
         "%s: walk steps from lambda" % name)

# Rotation never makes the study's representations worse: on every
# geometry the rotated shift + groups lambda is at most the canonical one
# (1e-9 Eh: rounding), and the rotated shifted lambda at most the canonical
# shifted one up to lam-shift's certified gap (its default stop, a relative
# gap of 1e-10, lam-shift(1)).
lam = {(r["molecule"], r["r_angstrom"], r["representation"]): float(r["lambda"]) for r in rows}
geoms = sorted({(m, x) for (m, x, _) in lam})
for m, x in geoms:
    sg, rsg = lam.get((m, x, "shift-grouped")), lam.get((m, x, "rot-shift-grouped"))
    t.ok(sg is not None and rsg is not None and rsg <= sg + 1e-9,
         "%s R=%s: rotated shift + groups lambda %s <= canonical %s" % (m, x, rsg, sg))
    s, rs = lam.get((m, x, "shift-pauli")), lam.get((m, x, "rot-shift"))
    t.ok(s is not None and rs is not None and rs <= s * (1 + 1e-10) + 1e-9,
         "%s R=%s: rotated shifted lambda %s <= canonical %s" % (m, x, rs, s))
t.ok(len(geoms) >= 4, "the SMALL setting has geometries (%d)" % len(geoms))

# The study draws its plots with gnuplot when it is there and leaves them
# out otherwise (examples/study/Makefile); `make check` installs it as root.
have_gnuplot = shutil.which("gnuplot") is not None
for png in ("lambda-vs-pauli.png", "stretch.png", "toffoli.png"):
    path = os.path.join(out, png)
    if have_gnuplot:
        ok = os.path.exists(path) and open(path, "rb").read(8) == b"\x89PNG\r\n\x1a\n"
        t.ok(ok, "plot %s is a PNG" % png)
    else:
        t.ok(not os.path.exists(path), "no gnuplot: the study leaves out %s" % png)

# `make big` (the 30-orbital case) on a small geometry of the same run:
# the half range of the (2,2) sector of h4 is the N-electron floor of the
# table (the sector of smallest |Sz| holds every multiplet of the block),
# and every lambda lies above the interval's lower end.
p = subprocess.run(make + ["big", "BIG_MOL=h4", "BIG_R=0.9"], env=env, capture_output=True,
                   text=True)
t.ok(p.returncode == 0, "make big on h4 runs", p.stderr[-3000:])
big = read_tsv("big.tsv")
t.ok(sorted(b["representation"] for b in big) == sorted({w[2] for w in want}),
     "big.tsv: one row per representation")
fn = {float(r["floor_n"]) for r in rows if (r["molecule"], r["r_angstrom"]) == ("h4", "0.9")}
for b in big:
    low, high, lam_b = float(b["floor_low"]), float(b["floor_high"]), float(b["lambda"])
    t.ok(len(fn) == 1 and abs(low - next(iter(fn))) < 1e-8,
         "big %s: floor_low %.10f is the N-electron floor %s" % (b["representation"], low, fn))
    t.ok(low <= high and lam_b >= low * (1 - 1e-9),
         "big %s: lambda %.6f >= floor_low %.6f, interval ordered" % (b["representation"], lam_b, low))
exact = [float(b["lambda"]) for b in big if b["construction"] != "df"]
t.ok(exact and all(float(b["floor_high"]) == min(exact) for b in big),
     "big: floor_high is the least lambda of the exact forms")

subprocess.run(["rm", "-rf", out])
t.done()
