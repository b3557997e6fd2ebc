#!/usr/bin/python3
"""lam-range against references from outside the project.

- Szabo and Ostlund, Modern Quantum Chemistry (1989), ch. 3: H2 in STO-3G at
  R = 1.4 bohr, full CI -1.1373 Eh from the printed MO integrals (from
  memory, 4 decimals).
- psi4 (Debian package): FCI energies of our seven test molecules (four of
  them with a frozen core), to 1e-8 Eh.
- numpy eigvalsh of the Hamiltonian built independently in
  tests/lib/refops.py (Jordan-Wigner matrices from the definitions): both
  ends of every (Na, Nb) sector and the Fock-space range, to 1e-9 Eh.
- Fact of the trade (common practice): the Pauli one-norm is at least
  fock_half_range, typically about twice it for molecules.
- numpy eigvalsh of one (Na, Nb) sector of N2 (STO-3G, our geometry, 10
  orbitals) built here from the FCIDUMP by the one-particle coupling form
  H = e0 + sum k_pq E_pq + 1/2 sum (pq|rs) E_pq E_rs (textbook second
  quantization, common practice): a value labelled exact is the extreme
  eigenvalue to --tol, also at --tol 1e-6 (where Davidson alone once
  converged to an interior eigenvalue 0.46 mEh below the top).
"""
import os
import tempfile
import sys

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402
lamtest.require_references("numpy", "scipy", "psi4")
import numpy as np  # noqa: E402

import molecules  # noqa: E402
import refops  # noqa: E402

tap = lamtest.Tap()
TMP = os.environ.get("TMPDIR", "/tmp")


def lam_range(stream, *args):
    rc, out, err = lamtest.run("lam-range", ["--quiet"] + list(args), stdin=stream)
    if rc != 0:
        tap.ok(False, "lam-range %s ran" % " ".join(args), err)
        return {}
    return lamtest.report(out)


def sectors(rep):
    """{(na, nb): (min, max, status, how)} from the sector lines."""
    out = {}
    for line in rep.get("sector", []):
        f = line.split("\t")
        lo = float(f[2]) if f[2] != "-" else None
        hi = float(f[3]) if f[3] != "-" else None
        out[(int(f[0]), f[1] if f[1] == "*" else int(f[1]))] = (lo, hi, f[4], f[5])
    return out


def ints(path, *args):
    return lamtest.run("lam-ints", list(args) + [path], check=True)[1]


# ---- Szabo-Ostlund H2 (textbook integrals typed in by hand) ----
path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "data", "h2-sto3g-r1.4bohr.fcidump")
rep = lam_range(ints(path))
# Szabo and Ostlund (1989), ch. 3, from memory: full CI -1.1373 Eh (4 decimals)
tap.near(rep.get("n_min"), -1.1373, 5e-5, "Szabo-Ostlund H2 full CI -1.1373 Eh")
tap.ok(rep.get("status") == "exact", "Szabo-Ostlund H2: status exact")

# ---- psi4 FCI energies (lowest eigenvalue of the N, Sz = 0 sector) ----
for name in ("h2", "h3plus", "h4chain", "lih", "hf", "h2o", "beh2"):
    fcid, ref = molecules.reference(name)
    norb, nelec = refops.read_fcidump(fcid)[:2]
    na, nb = (nelec + 1) // 2, nelec // 2
    rep = lam_range(ints(fcid), "--lowest", "--sector", "%d,%d" % (na, nb))
    got = sectors(rep).get((na, nb), (None,))[0]
    # psi4 FCI (Debian psi4), e_convergence 1e-12
    tap.near(got, ref["fci"], 1e-8, "%s: sector (%d,%d) lowest = psi4 FCI %.10f Eh" % (name, na, nb, ref["fci"]))
    tap.ok(rep.get("status") == "exact", "%s: certified (status exact)" % name)


# ---- numpy eigvalsh of independently built dense matrices ----
def dense_sectors(fcid):
    norb, nelec, e0, h, g = refops.read_fcidump(fcid)
    H = refops.fermion_hamiltonian(norb, e0, h, g).toarray()
    states = np.arange(1 << (2 * norb))
    up = int("01" * norb, 2)
    down = int("10" * norb, 2)
    na = np.array([bin(s & up).count("1") for s in states])
    nb = np.array([bin(s & down).count("1") for s in states])
    out = {}
    for a in range(norb + 1):
        for b in range(norb + 1):
            sel = (na == a) & (nb == b)
            w = np.linalg.eigvalsh(H[np.ix_(sel, sel)])
            out[(a, b)] = (w[0], w[-1])
    w = np.linalg.eigvalsh(H)
    return norb, nelec, out, (w[0], w[-1])


def compare(name, rep, ref, fock, nelec, path):
    got = sectors(rep)
    worst = 0.0
    missing = []
    for key, (lo, hi) in ref.items():
        if key not in got or got[key][0] is None:
            missing.append(key)
            continue
        worst = max(worst, abs(got[key][0] - lo), abs(got[key][1] - hi))
    tap.ok(not missing and worst <= 1e-9,
           "%s (%s): both ends of all %d sectors match numpy eigvalsh to 1e-9" % (name, path, len(ref)),
           "worst %.3g, missing %s" % (worst, missing))
    tap.near(rep.get("fock_min"), fock[0], 1e-9, "%s (%s): fock_min = numpy" % (name, path))
    tap.near(rep.get("fock_max"), fock[1], 1e-9, "%s (%s): fock_max = numpy" % (name, path))
    nlo = min(v[0] for k, v in ref.items() if k[0] + k[1] == nelec)
    nhi = max(v[1] for k, v in ref.items() if k[0] + k[1] == nelec)
    tap.near(rep.get("n_min"), nlo, 1e-9, "%s (%s): n_min = numpy" % (name, path))
    tap.near(rep.get("n_max"), nhi, 1e-9, "%s (%s): n_max = numpy" % (name, path))


for name in ("h2", "h3plus", "h4chain", "lih", "h2o"):
    fcid, _ = molecules.reference(name)
    norb, nelec, ref, fock = dense_sectors(fcid)
    sf = ints(fcid)
    rep = lam_range(sf, "--no-multiplets")
    compare(name, rep, ref, fock, nelec, "spinfree")
    tap.ok(rep.get("status") == "exact", "%s: status exact" % name)
    if name in ("h4chain", "lih"):
        pauli = lamtest.run("lam-map", [], stdin=sf, check=True)[1]
        compare(name, lam_range(pauli), ref, fock, nelec, "pauli")
        compare(name, lam_range(ints(fcid, "--fermion")), ref, fock, nelec, "fermion")
    # multiplets (the default): the same extremes from the smallest-|Sz| sectors alone
    mult = lam_range(sf)
    for key in ("fock_min", "fock_max", "n_min", "n_max"):
        tap.near(mult.get(key), rep.get(key), 1e-9, "%s: multiplets (default) give the same %s" % (name, key))
    # fact of the trade (common practice): Pauli lambda >= Delta E / 2,
    # typically about twice it for molecules
    norm = lamtest.report(lamtest.run("lam-norm", [], stdin=sf, check=True)[1])
    ratio = norm["lambda"] / rep["fock_half_range"]
    tap.ok(ratio >= 1.0, "%s: Pauli lambda %.4f >= fock_half_range %.4f" % (name, norm["lambda"], rep["fock_half_range"]))
    tap.ok(1.2 <= ratio <= 4.0, "%s: lambda / fock_half_range = %.2f, about twice" % (name, ratio))

# ---- inner bounds past --max-memory: Rayleigh quotients stay inside ----
fcid, _ = molecules.reference("h2o")
sf = ints(fcid)
exact = sectors(lam_range(sf, "--sector", "4,4"))[(4, 4)]
bound = lam_range(sf, "--sector", "4,4", "--bounds=always", "--bound-subspace", "40")
b = sectors(bound)[(4, 4)]
tap.ok(bound.get("status") == "bound" and b[2] == "bound", "h2o (4,4) by selected CI (40 determinants a side): status bound")
tap.ok(b[0] >= exact[0] - 1e-12 and b[1] <= exact[1] + 1e-12,
       "h2o (4,4): bounds [%.6f, %.6f] inside the exact range [%.6f, %.6f]" % (b[0], b[1], exact[0], exact[1]))
tap.ok(b[0] - exact[0] < 0.05, "h2o (4,4): the selected-CI lowest is within 50 mEh of the exact one")

# the same for the generic path (a Jordan-Wigner pauli stream)
fcid, _ = molecules.reference("lih")
pauli = lamtest.run("lam-map", [], stdin=ints(fcid), check=True)[1]
exact = sectors(lam_range(pauli, "--sector", "1,1"))[(1, 1)]
bound = lam_range(pauli, "--sector", "1,1", "--bounds", "--max-memory", "1K", "--bound-subspace", "20")
b = sectors(bound)[(1, 1)]
tap.ok(b[2] == "bound" and b[0] >= exact[0] - 1e-12 and b[1] <= exact[1] + 1e-12,
       "lih pauli (1,1): bounds [%.6f, %.6f] inside the exact range [%.6f, %.6f]" % (b[0], b[1], exact[0], exact[1]))
full = lam_range(pauli, "--bounds", "--max-memory", "1K", "--bound-subspace", "20")
ref_full = lam_range(pauli)
tap.ok(full.get("fock_min", -1e9) >= ref_full["fock_min"] - 1e-12 and
       full.get("fock_max", 1e9) <= ref_full["fock_max"] + 1e-12 and full.get("status") == "bound",
       "lih pauli, every sector bounded: fock_min/fock_max inside the exact Fock range")


# ---- the certificate: exact means the extreme, at any --tol ----
def strings(n, k):
    return [m for m in range(1 << n) if bin(m).count("1") == k]


def excitation_matrices(n, strs):
    """E_pq = a+_p a_q on one spin's strings, as sparse matrices."""
    import scipy.sparse as sp
    index = {m: i for i, m in enumerate(strs)}
    out = {}
    for p in range(n):
        for q in range(n):
            rows, cols, vals = [], [], []
            for j, m in enumerate(strs):
                if not m >> q & 1:
                    continue
                t = m & ~(1 << q)
                if t >> p & 1:
                    continue
                sign = (-1) ** (bin(m & ((1 << q) - 1)).count("1") + bin(t & ((1 << p) - 1)).count("1"))
                rows.append(index[t | (1 << p)])
                cols.append(j)
                vals.append(sign)
            out[(p, q)] = sp.csr_matrix((vals, (rows, cols)), shape=(len(strs), len(strs)))
    return out


def sector_matrix(fcid, na, nb):
    import scipy.sparse as sp
    norb, _, e0, h, g = refops.read_fcidump(fcid)
    A, B = strings(norb, na), strings(norb, nb)
    ea, eb = excitation_matrices(norb, A), excitation_matrices(norb, B)
    ia, ib = sp.identity(len(A), format="csr"), sp.identity(len(B), format="csr")
    E = {pq: (sp.kron(ea[pq], ib) + sp.kron(ia, eb[pq])).tocsr() for pq in ea}
    k = h - 0.5 * np.einsum("prrq->pq", g)
    dim = len(A) * len(B)
    H = sp.identity(dim, format="csr") * e0
    for (p, q), epq in E.items():
        M = k[p, q] * sp.identity(dim, format="csr")
        for (r, s), ers in E.items():
            if g[p, q, r, s] != 0:
                M = M + 0.5 * g[p, q, r, s] * ers
        H = H + epq @ M
    return H.toarray()


# a private file: two runs of this test at once must not share it
fd, n2 = tempfile.mkstemp(prefix="lam-range-ref-n2.", suffix=".fcidump", dir=TMP)
with os.fdopen(fd, "w") as f:
    f.write(lamtest.run("lam-scf", [], stdin="2\nN2, our geometry\nN 0 0 0\nN 0 0 1.098\n", check=True)[1])
w = np.linalg.eigvalsh(sector_matrix(n2, 3, 2))
sf = ints(n2)
for tol in ("1e-6", "1e-9"):
    rep = lam_range(sf, "--sector", "3,2", "--tol", tol)
    lo, hi, status, _ = sectors(rep)[(3, 2)]
    t = float(tol)
    for end, got, ref in (("min", lo, w[0]), ("max", hi, w[-1])):
        st = rep.get("sector_%s_status" % end)
        tap.ok(st in ("exact", "bound"), "N2 (3,2) --tol %s: sector_%s_status present" % (tol, end))
        if st == "exact":
            tap.near(got, ref, t, "N2 (3,2) --tol %s: the %s labelled exact is numpy's extreme %.9f" % (tol, end, ref))
        else:
            # a bound is a Rayleigh quotient: on the inner side of the extreme
            tap.ok((got >= ref - 1e-12) if end == "min" else (got <= ref + 1e-12),
                   "N2 (3,2) --tol %s: the %s is a bound on the right side" % (tol, end))
    if tol == "1e-9":
        tap.ok(rep.get("status") == "exact", "N2 (3,2) default tolerance: both ends certified exact")
os.unlink(n2)

tap.done()
