#!/usr/bin/python3
"""lam-map against independent references.

- H2/STO-3G, Jordan-Wigner, interleaved: the 15 coefficients in closed form
  from the integrals (derived by hand, below), for the textbook integrals of
  Szabo & Ostlund (Dover 1996, section 3.5.2, from memory) and psi4's.
- psi4 FCIDUMPs (tests/lib/molecules.py): the matrix of the lam-map output
  equals the fermionic Hamiltonian that tests/lib/refops.py builds from the
  FCIDUMP with its own Jordan-Wigner ladder matrices, to 1e-10.  For
  Bravyi-Kitaev and parity the reference is carried to the qubit basis by
  the encoding's basis permutation b = A n (A built in refops.py from the
  published definitions), so the whole matrix is compared, not only its
  spectrum.  numpy's lowest eigenvalue in the N-electron sector equals
  psi4's FCI energy to 1e-8 Eh.
"""
import os
import sys

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402
lamtest.require_references("numpy", "scipy", "psi4")
import molecules  # noqa: E402
import refops  # noqa: E402

import numpy as np  # noqa: E402
import scipy.sparse.linalg as spla  # noqa: E402

t = lamtest.Tap()
ENCODINGS = ("jordan-wigner", "bravyi-kitaev", "parity")


def mapped(fcidump, *args):
    return lamtest.pipe(("lam-ints", [fcidump]), ("lam-map", list(args)))


# --- H2 Jordan-Wigner coefficients in closed form.  For H2 in a minimal
# basis (two real orbitals of different symmetry: h12 = (11|12) = (22|12) = 0)
# n_i = (1 - Z_i)/2 and the exchange pairs written with X and Y give, in the
# interleaved order (derived by hand; the derivation and its numbers for the
# textbook integrals are in tests/data/h2-sto3g-r1.4bohr-jw.op):
def h2_jordan_wigner(e0, h, g):
    h11, h22 = h[0, 0], h[1, 1]
    j11, j12, j22, k12 = g[0, 0, 0, 0], g[0, 0, 1, 1], g[1, 1, 1, 1], g[0, 1, 0, 1]
    z0 = -(h11 / 2 + j11 / 4 + j12 / 2 - k12 / 4)
    z2 = -(h22 / 2 + j22 / 4 + j12 / 2 - k12 / 4)
    return {
        "": e0 + h11 + h22 + j11 / 4 + j22 / 4 + j12 - k12 / 2,
        "z:0": z0, "z:1": z0, "z:2": z2, "z:3": z2,
        "z:0-1": j11 / 4, "z:2-3": j22 / 4,
        "z:0,2": (j12 - k12) / 4, "z:1,3": (j12 - k12) / 4,
        "z:0,3": j12 / 4, "z:1-2": j12 / 4,
        "x:0-1 y:2-3": -k12 / 4, "x:2-3 y:0-1": -k12 / 4,
        "x:0,3 y:1-2": k12 / 4, "x:1-2 y:0,3": k12 / 4,
    }


def by_string(stream_text):
    terms, nq = refops.parse_pauli_stream(stream_text)
    return {refops.format_pauli(factors): c for c, factors in terms}, nq


DATA = os.path.join(os.path.dirname(os.path.abspath(__file__)), "data")
textbook = os.path.join(DATA, "h2-sto3g-r1.4bohr.fcidump")
cases = (("textbook integrals (Szabo & Ostlund 1996, section 3.5.2, from memory)", textbook),
         ("psi4 integrals at 0.7414 A", molecules.reference("h2")[0]))
for label, fcid in cases:
    norb, nelec, e0, h, g = refops.read_fcidump(fcid)
    want = h2_jordan_wigner(e0, h, g)
    got, nq = by_string(mapped(fcid))
    t.ok(set(got) == set(want), "H2 JW, %s: exactly the 15 strings of the closed form" % label,
         "got %s" % sorted(got))
    for k, v in want.items():
        t.near(got.get(k), v, 1e-12, "H2 JW, %s: coefficient of '%s'" % (label, k or "I"))
    t.ok(nq == 4, "H2 JW, %s: qubits: 4 in the header" % label)
# The file derived by hand from the textbook integrals says the same.
hand, _ = by_string(open(os.path.join(DATA, "h2-sto3g-r1.4bohr-jw.op")).read())
got, _ = by_string(mapped(textbook))
t.ok(set(hand) == set(got) and all(abs(hand[k] - got[k]) <= 1e-12 for k in hand),
     "H2 JW: lam-map of the textbook integrals equals tests/data/h2-sto3g-r1.4bohr-jw.op")

# --- dense matrices against the independent reference
for name in ("h2", "h3plus", "h4chain", "lih", "hf"):
    fcid, energies = molecules.reference(name)
    norb, nelec, e0, h, g = refops.read_fcidump(fcid)
    nmodes = 2 * norb
    for order in ("interleaved", "blocked"):
        if order == "blocked" and name not in ("h4chain", "lih"):
            continue
        H_ref = refops.fermion_hamiltonian(norb, e0, h, g, order)
        if order == "interleaved":
            # psi4 FCI energy (psi4 is the reference here)
            e_ref = refops.sector_ground(H_ref, nmodes, nelec)
            t.near(e_ref, energies["fci"], 1e-8,
                   "%s: numpy ground state of the reference in the %d-electron sector = "
                   "psi4 FCI" % (name, nelec))
        for enc in ENCODINGS:
            text = mapped(fcid, "--encoding", enc, "--spin-order", order)
            terms, nq = refops.parse_pauli_stream(text)
            H_map = refops.pauli_matrix(terms, nq)
            perm = refops.basis_permutation(refops.encoding_matrix(enc, nmodes))
            H_occ = H_map[perm][:, perm]
            diff = abs(H_occ - H_ref).max() if (H_occ - H_ref).nnz else 0.0
            t.ok(nq == nmodes and diff <= 1e-10,
                 "%s %s %s: matrix of lam-map output = reference Hamiltonian (1e-10)"
                 % (name, enc, order), "qubits %s, largest difference %g" % (nq, diff))
            if order == "interleaved" and enc != "jordan-wigner" and name == "h4chain":
                # the encoded operator itself, in its own basis: its N-electron
                # states are the images b = A n of the occupation states
                sub = [perm[i] for i in range(1 << nmodes) if bin(i).count("1") == nelec]
                e_enc = float(np.linalg.eigvalsh(H_map[sub][:, sub].toarray().real)[0])
                t.near(e_enc, energies["fci"], 1e-8,
                       "%s %s: lowest eigenvalue in the encoded N sector = psi4 FCI"
                       % (name, enc))

# --- a fermion stream (lam-ints --fermion) maps to the same operator as the spinfree one
fcid, _ = molecules.reference("h4chain")
a = lamtest.pipe(("lam-ints", [fcid]), ("lam-map", []))
b = lamtest.pipe(("lam-ints", ["--fermion", fcid]), ("lam-map", []))
ta, _ = refops.parse_pauli_stream(a)
tb, _ = refops.parse_pauli_stream(b)
d = abs(refops.pauli_matrix(ta, 8) - refops.pauli_matrix(tb, 8)).max()
t.ok(d <= 1e-12, "h4chain: fermion and spinfree input map to the same Pauli operator",
     "largest difference %g" % d)
t.done()
