#!/usr/bin/python3
"""cost-ref.t - lam-cost against hand calculations and an independent
recomputation of what each construction reads from the streams.

Walk steps of qubitized phase estimation: ceil(pi * lambda / (2 eps.phase))
(Babbush et al., Phys. Rev. X 8, 041015 (2018); Lee et al., PRX Quantum 2,
030305 (2021); both from memory), eps.phase = 0.8 eps by default.  The
one-norms are recomputed here in Python from the operators the pipeline
writes, independently of lamina's readers; the double-factorization
parameters (factors, eigenvectors, the one-norm the DF walk block-encodes:
sum |t| + sum_l (1/2)|mu_l| (sum_i |v_li|)^2, von Burg et al., Phys. Rev.
Research 3, 033055 (2021), from memory) with numpy's eigh.
"""
import math
import os
import sys


sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402
lamtest.require_references("numpy", "scipy", "psi4")
import numpy as np  # noqa: E402
import molecules  # noqa: E402
import refops  # noqa: E402

t = lamtest.Tap()
PHASE = 0.8


def walk_steps(lam, eps):
    return math.ceil(math.pi * lam / (2 * PHASE * eps))


def pauli_terms(text):
    """[(coef, string, group)] of a pauli stream, parsed here."""
    out = []
    for line in text.splitlines():
        if not line.strip() or line.startswith("#"):
            continue
        f = line.split()
        group = None
        if f[-1].startswith("@"):
            group = int(f[-1][1:])
            f = f[:-1]
        out.append((float(f[0]), " ".join(f[1:]), group))
    return out


def pauli_lambda(terms, grouped):
    """One-norm without the identity; a group costs sqrt(sum c^2) (fact
    of the trade, common practice: anticommuting strings square to the
    identity)."""
    merged = {}
    for c, s, g in terms:
        if s:
            key = (s, g if grouped else None)
            merged[key] = merged.get(key, 0.0) + c
    groups, lam = {}, 0.0
    for (s, g), c in merged.items():
        if g is None:
            lam += abs(c)
        else:
            groups[g] = groups.get(g, 0.0) + c * c
    return lam + sum(math.sqrt(v) for v in groups.values()), len(merged), len(groups)


def df_parameters(text):
    """(flat lambda, DF lambda, factors, eigenvectors) of a fragments
    stream: each fragment's pair terms give l (l_ij / 4 on every spin pair
    of i != j, l_ii / 4 on (ia, ib)); its eigenpairs are the factors."""
    n, rows = refops.stream_rows(text, "orbitals")
    frags = {}
    flat = 0.0
    for f in rows:
        if len(f) < 4 or f[1] != "R":
            continue
        c, frag = float(f[0]), int(f[2])
        flat += abs(c)
        modes = [int(m[:-1]) for m in f[3:]]
        frags.setdefault(frag, []).append((c, modes))
    lam, factors, eigvecs = 0.0, 0, 0
    for terms in frags.values():
        l = np.zeros((n, n))
        singles = set()
        for c, modes in terms:
            if len(modes) == 1:
                lam += abs(c)
                singles.add(modes[0])
            elif modes[0] == modes[1]:
                l[modes[0], modes[0]] += 4 * c
            else:
                l[modes[0], modes[1]] += c
                l[modes[1], modes[0]] += c
        eigvecs += len(singles)
        if not l.any():
            continue
        w, v = np.linalg.eigh(l)
        for k in range(n):
            if abs(w[k]) <= 1e-12 * abs(w).max():
                continue
            a = np.abs(v[:, k])
            lam += 0.5 * abs(w[k]) * a.sum() ** 2
            factors += 1
            eigvecs += int((a > 1e-10 * a.max()).sum())
    return flat, lam, factors, eigvecs


def cost(args, stdin):
    return lamtest.report(lamtest.run("lam-cost", ["-q"] + args, stdin=stdin, check=True)[1])


# 1. H2/STO-3G at 0.7414 A: Jordan-Wigner one-norm 1.8850504923 Eh
# (of psi4's integrals, as lam-norm gives it; see norm-ref.t).  By hand:
# pi * 1.8850504923 / 0.00256 = 2313.3 -> 2314 at 1.6 mEh and
# pi * 1.8850504923 / 0.00016 = 37012.9 -> 37013 at 0.1 mEh.
h2, _ = molecules.reference("h2")
h2_pauli = lamtest.pipe(("lam-ints", [h2]), ("lam-map", []))
for eps, want in ((1.6e-3, 2314), (1e-4, 37013)):
    rep = cost(["--error", repr(eps)], h2_pauli)
    t.ok(rep.get("walk.steps") == want,
         "H2 walk steps at %g Eh: %d by hand" % (eps, want), rep.get("walk.steps"))
    t.near(rep.get("lambda"), 1.8850504923, 1e-9, "H2 lambda = 1.8850504923 Eh (norm-ref.t checks it against numpy)")

# 2. LiH (frozen core) and water: lambda recomputed here from the Pauli
# terms, with and without grouping, and the DF parameters from the
# fragments stream.
for name in ("lih", "h2o"):
    fcid, _ = molecules.reference(name)
    pauli = lamtest.pipe(("lam-ints", [fcid]), ("lam-map", []))
    lam, nterms, _ = pauli_lambda(pauli_terms(pauli), False)
    for eps in (1.6e-3, 2.5e-4):
        rep = cost(["--error", repr(eps)], pauli)
        t.ok(rep.get("construction") == "sparse", "%s pauli priced as sparse" % name)
        t.near(rep.get("lambda"), lam, 1e-12, "%s Pauli lambda recomputed" % name, rel=True)
        t.ok(rep.get("walk.steps") == walk_steps(lam, eps),
             "%s walk steps at %g Eh = ceil(pi lambda / 2 eps.phase)" % (name, eps),
             "got %r want %r" % (rep.get("walk.steps"), walk_steps(lam, eps)))
        t.ok(rep.get("unitaries") == nterms, "%s: one unitary per Pauli string" % name)
        t.ok(rep.get("run.toffoli") == rep.get("step.toffoli") * rep.get("walk.steps")
             and rep.get("step.toffoli") == sum(rep.get("step.toffoli." + p) for p in
                                                ("select", "prepare", "rotations", "other")),
             "%s Toffoli totals consistent" % name)
        flat = cost(["--error", repr(eps), "--construction", "flat"], pauli)
        t.ok(flat.get("step.toffoli.select") == nterms - 1, "%s flat SELECT L - 1" % name)

    grouped = lamtest.run("lam-group", ["--report", "/dev/null"], stdin=pauli, check=True)[1]
    glam, _, ngroups = pauli_lambda(pauli_terms(grouped), True)
    rep = cost([], grouped)
    t.ok(rep.get("construction") == "grouped", "%s grouped stream priced by groups" % name)
    t.near(rep.get("lambda"), glam, 1e-12, "%s grouped lambda recomputed" % name, rel=True)
    t.ok(rep.get("walk.steps") == walk_steps(glam, 1.6e-3), "%s grouped walk steps" % name)
    t.ok(rep.get("lambda") <= lam * (1 + 1e-12),
         "%s grouped lambda <= Pauli lambda (fact of the trade, common practice)" % name)

    # lam-norm's report gives lam-cost the same figures as the stream.
    norm = lamtest.run("lam-norm", [], stdin=grouped, check=True)[1]
    rep2 = cost([], norm)
    t.ok(all(rep2.get(k) == rep.get(k) for k in ("walk.steps", "unitaries", "groups",
                                                 "step.rotations", "construction")),
         "%s: report and stream input agree" % name,
         "\n".join("%s %r %r" % (k, rep.get(k), rep2.get(k)) for k in rep))

    frag = lamtest.pipe(("lam-ints", [fcid]), ("lam-factor", []))
    code, out, err = lamtest.run("lam-cost", ["-q"], stdin=frag)
    if not t.ok(code == 0, "%s fragments stream accepted" % name, err):
        continue
    flam, dlam, factors, eigvecs = df_parameters(frag)
    rep = lamtest.report(out)
    t.ok(rep.get("construction") == "df", "%s fragments priced by DF" % name)
    t.near(rep.get("lambda"), dlam, 1e-9, "%s DF lambda recomputed with numpy" % name, rel=True)
    t.ok(rep.get("df.factors") == factors and rep.get("df.eigenvectors") == eigvecs,
         "%s DF factors %d and eigenvectors %d recomputed" % (name, factors, eigvecs),
         "got %r %r" % (rep.get("df.factors"), rep.get("df.eigenvectors")))
    t.ok(rep.get("walk.steps") == walk_steps(dlam, 1.6e-3), "%s DF walk steps" % name)
    rep = cost(["--construction", "flat"], frag)
    t.near(rep.get("lambda"), flam, 1e-9, "%s flat fragments lambda recomputed" % name, rel=True)

t.done()
