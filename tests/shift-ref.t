#!/usr/bin/python3
"""lam-shift against references outside the project.

- The optimum: the same L1 problem built independently, from the explicit
  Pauli (Jordan-Wigner) expansion of H and of K for unit parameter vectors,
  K written here from its definition as products of ladder operators
  (a1 (N - N0), a2 (N^2 - N0^2), xi_pq E_pq (N - N0)), then solved by
  scipy.optimize.linprog with HiGHS.  lambda_after must agree to 1e-8.
- The N block: dense matrices built here with numpy (own Jordan-Wigner
  ladder matrices, common practice) from psi4's FCIDUMP and from the
  shifted stream: same N-electron spectrum, K zero on the N block; and
  lam-range on H and H - K gives the same n_min, n_max.
- Facts of the trade (common practice): lambda >= fock_half_range of the
  operator, and fock_half_range(H - K) >= n_half_range(H).
"""
import os
import sys

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402
lamtest.require_references("numpy", "scipy", "psi4")
import numpy as np
import scipy.sparse as sp
from scipy.optimize import linprog

import molecules
import refops

tap = lamtest.Tap()
MOLECULES = os.environ.get("SHIFT_REF_MOLECULES", "h2 h3plus h4chain lih h2o").split()


# ---- streams -------------------------------------------------------------

def fermion_stream(nmodes, terms):
    lines = ["#% lamina-op 2", "#% kind: fermion", "#% modes: " + str(nmodes)]
    for c, ops in terms:
        ladder = [(int(o[:-1]), o[-1] == "+") for o in ops]
        for d, cre, ann in refops.normal_order(c, ladder):
            lines.append(refops.fermion_line(d, cre, ann))
    lines.append("#% end")
    return "\n".join(lines) + "\n"


def pauli_dict(text):
    terms, _ = refops.parse_pauli_stream(text)
    out = {}
    for c, factors in terms:
        key = tuple(sorted((q, l) for l, q in factors))
        out[key] = out.get(key, 0.0) + c
    return out


# ---- K from its definition ------------------------------------------------

def number_terms(n):
    return [["%d+" % m, "%d-" % m] for m in range(2 * n)]


def excitation(p, q):
    """The ladder terms of E_pq + E_qp (E_pp once) over both spins,
    interleaved modes."""
    e = []
    for s in range(2):
        e.append(["%d+" % (2 * p + s), "%d-" % (2 * q + s)])
        if q != p:
            e.append(["%d+" % (2 * q + s), "%d-" % (2 * p + s)])
    return e


def unit_shifts(n, n0):
    """[(name, ladder terms)] for a1, a2 and xi_pq (p <= q), each K with
    one parameter 1 (xi symmetric: xi_pq = xi_qp = 1)."""
    num = number_terms(n)
    out = [("a1", [(1.0, t) for t in num] + [(-float(n0), [])]),
           ("a2", [(1.0, a + b) for a in num for b in num] + [(-float(n0 * n0), [])])]
    for p in range(n):
        for q in range(p, n):
            e = excitation(p, q)
            terms = [(1.0, a + b) for a in e for b in num] + [(-float(n0), a) for a in e]
            out.append(("xi_%d_%d" % (p, q), terms))
    return out


def spin_unit_shifts(n, ms2):
    """b1 (Sz - S0), b2 (Sz^2 - S0^2), zeta_pq E_pq (Sz - S0) with
    Sz = 1/2 sum_p (n_p,up - n_p,down), interleaved modes."""
    s0 = ms2 / 2.0
    sz = [(0.5 if m % 2 == 0 else -0.5, ["%d+" % m, "%d-" % m]) for m in range(2 * n)]
    out = [("b1", sz + [(-s0, [])]),
           ("b2", [(c * d, a + b) for c, a in sz for d, b in sz] + [(-s0 * s0, [])])]
    for p in range(n):
        for q in range(p, n):
            e = excitation(p, q)
            terms = [(c, a + b) for a in e for c, b in sz] + [(-s0, a) for a in e]
            out.append(("zeta_%d_%d" % (p, q), terms))
    return out


def pauli_of_fermion(n, terms):
    return pauli_dict(lamtest.pipe(("lam-map", []), stdin=fermion_stream(2 * n, terms)))


def linprog_lambda(hp, kps):
    """min_x sum_P |h_P - sum_j x_j k_jP| over non-identity P, by HiGHS."""
    keys = sorted((set(hp) | {k for kp in kps for k in kp}) - {()})
    m, k = len(keys), len(kps)
    pos = {key: i for i, key in enumerate(keys)}
    h = np.array([hp.get(key, 0.0) for key in keys])
    rows, cols, vals = [], [], []
    for j, kp in enumerate(kps):
        for key, v in kp.items():
            if key != ():
                rows.append(pos[key]), cols.append(j), vals.append(v)
    M = sp.csr_matrix((vals, (rows, cols)), shape=(m, k))
    eye = sp.identity(m, format="csr")
    A = sp.vstack([sp.hstack([-M, -eye]), sp.hstack([M, -eye])]).tocsr()
    b = np.concatenate([-h, h])
    c = np.concatenate([np.zeros(k), np.ones(m)])
    bounds = [(None, None)] * k + [(0, None)] * m
    res = linprog(c, A_ub=A, b_ub=b, bounds=bounds, method="highs")
    return res.fun, res.x[:k], M


# ---- dense sectors ----------------------------------------------------------

def sector_index(nmodes):
    occ = np.array([bin(i).count("1") for i in range(1 << nmodes)])
    return {N: np.where(occ == N)[0] for N in range(nmodes + 1)}


def spinfree_matrix(n, e0, h, g):
    """Sparse H = e0 + sum h E + 1/2 sum g (E_pq E_rs - d_qr E_ps), with
    E_pq = sum_s a+_ps a_qs from refops' Jordan-Wigner ladder matrices."""
    a = refops.annihilators(2 * n)
    E = [[sum(a[2 * p + s].T @ a[2 * q + s] for s in range(2)).tocsr() for q in range(n)]
         for p in range(n)]
    dim = 1 << (2 * n)
    H = sp.identity(dim, format="csr") * e0
    for p in range(n):
        for q in range(n):
            W = sp.csr_matrix((dim, dim))
            for r in range(n):
                for s in range(n):
                    if g[p, q, r, s] != 0:
                        W = W + g[p, q, r, s] * E[r][s]
            H = H + h[p, q] * E[p][q] + 0.5 * (E[p][q] @ W)
    for p in range(n):
        for s in range(n):
            v = sum(g[p, q, q, s] for q in range(n))
            if v != 0:
                H = H - 0.5 * v * E[p][s]
    return H.tocsr()


def extremes(H, idx):
    ev = np.linalg.eigvalsh(H[idx][:, idx].toarray())
    return ev[0], ev[-1], ev


def fock_half_range(H, sectors):
    lo = min(extremes(H, idx)[0] for idx in sectors.values() if len(idx))
    hi = max(extremes(H, idx)[1] for idx in sectors.values() if len(idx))
    return (hi - lo) / 2


# ---- the checks ---------------------------------------------------------------

def shift_with_report(args, stdin):
    """lam-shift ARGS -r FILE: (rc, stream, stderr, report as a dict)."""
    return lamtest.run_with_report("lam-shift", args, stdin=stdin)


table = []
for name in MOLECULES:
    path, ref = molecules.reference(name)
    norb, nelec, e0, h, g = refops.read_fcidump(path)
    hstream = lamtest.pipe(("lam-ints", [path]))
    rc, shifted, err, rep = shift_with_report(["--quiet"], hstream)
    tap.ok(rc == 0, "%s: lam-shift runs" % name, err)
    after, before = rep["lambda_after"], rep["lambda_before"]
    tap.ok(rep["converged"] == "yes" and rep["relative_gap"] <= 1e-10,
           "%s: certified relative gap <= 1e-10 (%.3g)" % (name, rep["relative_gap"]))

    # the optimum, independently
    hp = pauli_dict(lamtest.pipe(("lam-map", []), stdin=hstream))
    shifts = unit_shifts(norb, nelec)
    kps = [pauli_of_fermion(norb, terms) for _, terms in shifts]
    best, xbest, _ = linprog_lambda(hp, kps)
    tap.near(after, best, 1e-8, "%s: lambda_after = HiGHS optimum of the Pauli L1 problem "
             "(%d parameters)" % (name, len(kps)), rel=True)
    tap.near(before, sum(abs(v) for k, v in hp.items() if k != ()), 1e-10,
             "%s: lambda_before = Pauli one-norm of H" % name, rel=True)
    sp_after = pauli_dict(lamtest.pipe(("lam-map", []), stdin=shifted))
    tap.near(sum(abs(v) for k, v in sp_after.items() if k != ()), after, 1e-10,
             "%s: Pauli one-norm of the written H - K = lambda_after" % name, rel=True)

    # the N block, dense
    sectors = sector_index(2 * norb)
    H = spinfree_matrix(norb, e0, h, g)
    HK = spinfree_matrix(*refops.read_spinfree(shifted))
    rc, kstream, err = lamtest.run("lam-shift", ["--quiet", "--emit-shift"], stdin=hstream)
    K = spinfree_matrix(*refops.read_spinfree(kstream))
    nb = sectors[nelec]
    kmax = abs(K[nb][:, nb]).max() if K[nb][:, nb].nnz else 0.0
    tap.ok(kmax <= 1e-10, "%s: K is zero on the %d-electron block (max %.2g)" % (name, nelec, kmax))
    lo_h, hi_h, ev_h = extremes(H, nb)
    if ref["frozen"] == 0:
        # psi4's frozen-core FCIDUMPs lack some one-body integrals (observed
        # in scf-ref.t), so only all-electron ones are compared
        tap.near(lo_h, ref["fci"], 1e-8, "%s: N-block minimum of H = psi4 FCI" % name)
    lo_k, hi_k, ev_k = extremes(HK, nb)
    tap.ok(np.max(np.abs(ev_h - ev_k)) <= 1e-9,
           "%s: H - K has the spectrum of H on the N block (numpy)" % name)
    # the same with lam-range
    r_h = lamtest.report(lamtest.pipe(("lam-range", []), stdin=hstream))
    r_k = lamtest.report(lamtest.pipe(("lam-range", []), stdin=shifted))
    tap.ok(abs(r_h["n_min"] - r_k["n_min"]) <= 1e-9 and abs(r_h["n_max"] - r_k["n_max"]) <= 1e-9,
           "%s: lam-range n_min, n_max of H and H - K agree to 1e-9" % name,
           "H %r %r, H-K %r %r" % (r_h["n_min"], r_h["n_max"], r_k["n_min"], r_k["n_max"]))
    fock_k = fock_half_range(HK, sectors)
    n_half = (hi_h - lo_h) / 2
    tap.near(r_k["fock_half_range"], fock_k, 1e-9,
             "%s: lam-range fock_half_range(H - K) = numpy's" % name)
    tap.ok(after >= r_k["fock_half_range"] - 1e-10 and
           r_k["fock_half_range"] >= r_h["n_half_range"] - 1e-10,
           "%s: with lam-range too: lambda_after >= fock_half_range(H - K) >= n_half_range(H)" % name)
    tap.ok(after >= fock_k - 1e-10 and fock_k >= n_half - 1e-10,
           "%s: lambda_after %.6f >= fock_half_range(H - K) %.6f >= n_half_range(H) %.6f"
           % (name, after, fock_k, n_half))
    # HiGHS returns a vertex of the optimal face; its Fock range, for the record
    vp = dict(hp)
    for x, kp in zip(xbest, kps):
        for key, v in kp.items():
            vp[key] = vp.get(key, 0.0) - x * v
    V = refops.pauli_matrix([(c, [(l, q) for q, l in key]) for key, c in vp.items()], 2 * norb)
    fock_v = fock_half_range(sp.csr_matrix(V.real), sectors)
    table.append((name, 2 * norb, before, after, fock_k / n_half, fock_v / n_half))

# ---- spin terms ----------------------------------------------------------------
# More parameters can only lower the optimum (the spin-free shift is the
# case b = zeta = 0).  The (N, Sz) block keeps the spectrum of H.
SPIN = os.environ.get("SHIFT_REF_SPIN", "h2 h3plus h4chain").split()
spin_table = []
for name in SPIN:
    path, ref = molecules.reference(name)
    norb, nelec, e0, h, g = refops.read_fcidump(path)
    hstream = lamtest.pipe(("lam-ints", [path]))
    plain = shift_with_report(["-q"], hstream)[3]
    rc, shifted, err, rep = shift_with_report(["-q", "--spin"], hstream)
    tap.ok(rc == 0 and "#% kind: fermion" in shifted, "%s --spin: fermion stream written" % name, err)
    after = rep["lambda_after"]
    tap.ok(after <= plain["lambda_after"] * (1 + 1e-12),
           "%s --spin: lambda %.6f <= spin-free shift %.6f" % (name, after, plain["lambda_after"]))
    hp = pauli_dict(lamtest.pipe(("lam-map", []), stdin=hstream))
    kps = [pauli_of_fermion(norb, t) for _, t in unit_shifts(norb, nelec) + spin_unit_shifts(norb, 0)]
    best = linprog_lambda(hp, kps)[0]
    tap.near(after, best, 1e-8, "%s --spin: lambda_after = HiGHS optimum (%d parameters)"
             % (name, len(kps)), rel=True)
    out = lamtest.pipe(("lam-map", []), stdin=shifted)
    terms, nq = refops.parse_pauli_stream(out)
    tap.near(sum(abs(c) for c, f in terms if f), after, 1e-10,
             "%s --spin: Pauli one-norm of the written H - K = lambda_after" % name, rel=True)
    HK = refops.pauli_matrix(terms, nq)
    H = spinfree_matrix(norb, e0, h, g)
    states = np.arange(1 << nq)
    up = np.array([bin(int(x) & int("01" * norb, 2)).count("1") for x in states])
    dn = np.array([bin(int(x) & int("10" * norb, 2)).count("1") for x in states])
    blk = np.where((up + dn == nelec) & (up == dn))[0]
    ev_h = np.linalg.eigvalsh(H[blk][:, blk].toarray())
    ev_k = np.linalg.eigvalsh(HK[blk][:, blk].toarray())
    tap.ok(np.max(np.abs(ev_h - ev_k)) <= 1e-9,
           "%s --spin: the (N, Sz = 0) block keeps the spectrum of H" % name)
    spin_table.append((name, plain["lambda_after"], after))

for name, plain, spin in spin_table:
    print("# %-8s spin-free shift %.6f  with spin terms %.6f  (%.2f %% lower)"
          % (name, plain, spin, 100 * (1 - spin / plain)))
for name, q, before, after, ratio, vratio in table:
    print("# %-8s qubits %2d  lambda %.6f -> %.6f  fock_half_range(H-K)/n_half_range(H) %.4f"
          " (HiGHS vertex %.4f)" % (name, q, before, after, ratio, vratio))
tap.done()
