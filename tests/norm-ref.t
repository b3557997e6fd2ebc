#!/usr/bin/python3
"""lam-norm against references outside the project.

- H2/STO-3G at 1.4 bohr, the textbook integrals of Szabo & Ostlund, Modern
  Quantum Chemistry (Dover 1996), section 3.5.2 (from memory): Pauli one-norm
  1.885925 and identity -0.098125 Eh, derived by hand in
  tests/data/h2-sto3g-r1.4bohr-jw.op.
- The one-norm of the Pauli decomposition of the dense Hamiltonian that
  tests/lib/refops.py builds independently from the FCIDUMP (all 4^n
  coefficients by trace, numpy) equals lam-norm's closed form.
- The same closed form written again in numpy from the published formula
  (Koridon et al., Phys. Rev. Research 3, 033127 (2021), from memory) equals lam-norm's.
- Fact of the trade (common practice): Jordan-Wigner, Bravyi-Kitaev and
  parity map each Majorana monomial to one Pauli string, so lam-norm of
  spinfree input = lam-map | lam-norm under all three, to 1e-12 relative;
  fermion input (lam-ints --fermion) gives the same.
"""
import os
import sys

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402
lamtest.require_references("numpy", "scipy", "psi4")
import molecules  # noqa: E402
import refops  # noqa: E402

import numpy as np  # noqa: E402

t = lamtest.Tap()


def norm_of(*stages):
    return lamtest.report(lamtest.pipe(*stages))


fcid = os.path.join(os.path.dirname(os.path.abspath(__file__)), "data", "h2-sto3g-r1.4bohr.fcidump")
rep = norm_of(("lam-ints", [fcid]), ("lam-norm", []))
# by hand from Szabo & Ostlund's integrals (tests/data/h2-sto3g-r1.4bohr-jw.op):
# 2|Z0| + 2|Z2| + J11/4 + J22/4 + 2 (J12 - K12)/4 + 2 J12/4 + 4 K12/4
t.near(rep["lambda"], 1.885925, 1e-12, "H2 one-norm 1.885925 from the textbook integrals")
t.near(rep["constant"], -0.098125, 1e-12, "H2 identity -0.098125 from the textbook integrals")

for name in ("h2", "h3plus", "h4chain", "lih", "hf", "h2o", "beh2"):
    fcid, _ = molecules.reference(name)
    closed = norm_of(("lam-ints", [fcid]), ("lam-norm", []))
    t.ok(closed["method"] == "closed-form", "%s: spinfree lambda by the closed form" % name)
    for enc in ("jordan-wigner", "bravyi-kitaev", "parity"):
        mapped = norm_of(("lam-ints", [fcid]), ("lam-map", ["--encoding", enc]), ("lam-norm", []))
        t.near(mapped["lambda"], closed["lambda"], 1e-12,
               "%s %s: lam-map | lam-norm = closed form (1e-12 relative)" % (name, enc), rel=True)
        t.near(mapped["constant"], closed["constant"], 1e-12,
               "%s %s: identity coefficient agrees" % (name, enc), rel=True)
    ferm = norm_of(("lam-ints", ["--fermion", fcid]), ("lam-norm", []))
    t.near(ferm["lambda"], closed["lambda"], 1e-12,
           "%s: fermion stream lambda = spinfree closed form" % name, rel=True)
    norb, nelec, e0, h, g = refops.read_fcidump(fcid)
    t.near(closed["lambda"], refops.koridon_lambda(h, g), 1e-12,
           "%s: lam-norm = the published closed form written in numpy" % name, rel=True)
    if 2 * norb <= 10:
        H = refops.fermion_hamiltonian(norb, e0, h, g).toarray()
        c = refops.pauli_coefficients(H, 2 * norb)
        lam_ref = float(np.abs(c).sum() - abs(c[0, 0]))
        t.near(closed["lambda"], lam_ref, 1e-9,
               "%s: lambda = one-norm of the trace decomposition of the dense reference "
               "(%d qubits)" % (name, 2 * norb))
        t.near(closed["constant"], float(c[0, 0].real), 1e-10,
               "%s: constant = Tr(H)/2^n of the dense reference" % name)
t.done()
