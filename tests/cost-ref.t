#!/usr/bin/python3
"""cost-ref.t - lam-cost against hand calculations from the published formula.

Walk steps of qubitized phase estimation: ceil(pi * lambda / (2 eps))
(Babbush et al., Phys. Rev. X 8, 041015 (2018); Lee et al., PRX Quantum 2,
030305 (2021); both from memory).  The one-norms are recomputed here in
Python from the operators the pipeline writes, independently of lamina's
readers; the H2 one-norm is the one norm-ref.t checks against numpy.
"""
import math
import os
import sys

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402
import molecules  # noqa: E402

t = lamtest.Tap()


def walk_steps(lam, eps):
    return math.ceil(math.pi * lam / (2 * eps))


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


# 1. H2/STO-3G at 0.7414 A: Jordan-Wigner one-norm 1.8850504923 Eh
# (of psi4's integrals, as lam-norm gives it; see norm-ref.t).  By hand:
# pi * 1.8850504923 / 0.0032 = 1850.64 -> 1851 at 1.6 mEh and
# pi * 1.8850504923 / 0.0002 = 29610.30 -> 29611 at 0.1 mEh.
h2, _ = molecules.reference("h2")
h2_pauli = lamtest.pipe(("lam-ints", [h2]), ("lam-map", []))
for eps, want in ((1.6e-3, 1851), (1e-4, 29611)):
    rep = lamtest.report(lamtest.run("lam-cost", ["-q", "--error", repr(eps)],
                                     stdin=h2_pauli, check=True)[1])
    t.ok(rep.get("walk_steps") == want,
         "H2 walk steps at %g Eh: %d by hand" % (eps, want), rep.get("walk_steps"))
    t.near(rep.get("lambda"), 1.8850504923, 1e-9, "H2 lambda = 1.8850504923 Eh")

# 2. LiH (frozen core) and water: lambda recomputed here from the Pauli
# terms, with and without grouping, and from the fragments stream.
for name in ("lih", "h2o"):
    fcid, _ = molecules.reference(name)
    pauli = lamtest.pipe(("lam-ints", [fcid]), ("lam-map", []))
    lam, nterms, _ = pauli_lambda(pauli_terms(pauli), False)
    for eps in (1.6e-3, 2.5e-4):
        rep = lamtest.report(lamtest.run("lam-cost", ["-q", "-e", repr(eps)],
                                         stdin=pauli, check=True)[1])
        t.near(rep.get("lambda"), lam, 1e-12, "%s Pauli lambda recomputed" % name, rel=True)
        t.ok(rep.get("walk_steps") == walk_steps(lam, eps),
             "%s walk steps at %g Eh = ceil(pi lambda / 2 eps)" % (name, eps),
             "got %r want %r" % (rep.get("walk_steps"), walk_steps(lam, eps)))
        t.ok(rep.get("unitaries") == nterms, "%s: one unitary per Pauli string" % name)
        # Counting of lam-cost(1): total = per step x steps, SELECT = L - 1.
        t.ok(rep.get("toffoli_total") == rep.get("toffoli_per_step") * rep.get("walk_steps")
             and rep.get("toffoli_select") == nterms - 1, "%s Toffoli totals consistent" % name)

    grouped = lamtest.run("lam-group", [], stdin=pauli, check=True)[1]
    glam, _, ngroups = pauli_lambda(pauli_terms(grouped), True)
    rep = lamtest.report(lamtest.run("lam-cost", ["-q"], stdin=grouped, check=True)[1])
    t.near(rep.get("lambda"), glam, 1e-12, "%s grouped lambda recomputed" % name, rel=True)
    t.ok(rep.get("walk_steps") == walk_steps(glam, 1.6e-3), "%s grouped walk steps" % name)
    t.ok(rep.get("lambda") <= lam * (1 + 1e-12),
         "%s grouped lambda <= Pauli lambda (fact of the trade, common practice)" % name)

    # lam-norm's report gives lam-cost the same figures as the stream.
    norm = lamtest.run("lam-norm", [], stdin=grouped, check=True)[1]
    rep2 = lamtest.report(lamtest.run("lam-cost", ["-q"], stdin=norm, check=True)[1])
    t.ok(all(rep2.get(k) == rep.get(k) for k in ("walk_steps", "unitaries", "toffoli_total",
                                                 "logical_qubits", "rotations_per_step")),
         "%s: report and stream input agree" % name,
         "\n".join("%s %r %r" % (k, rep.get(k), rep2.get(k)) for k in rep))

    frag = lamtest.pipe(("lam-ints", [fcid]), ("lam-factor", []))
    code, out, err = lamtest.run("lam-cost", ["-q"], stdin=frag)
    if not t.ok(code == 0, "%s fragments stream accepted" % name, err):
        continue
    flam = sum(abs(float(l.split()[0])) for l in frag.splitlines()
               if l.strip() and not l.startswith("#") and len(l.split()) > 1
               and l.split()[1] == "R")
    rep = lamtest.report(out)
    t.near(rep.get("lambda"), flam, 1e-9, "%s fragments lambda recomputed" % name, rel=True)
    t.ok(rep.get("walk_steps") == walk_steps(rep.get("lambda"), 1.6e-3),
         "%s fragments walk steps" % name)

t.done()
