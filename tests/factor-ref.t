#!/usr/bin/python3
"""lam-factor against independent references.

- Dense check: the test builds every unitary of the fragments stream as a
  dense matrix with its own Jordan-Wigner ladder operators (numpy) and its
  own rotated modes b_i = sum_p U_pi a_p, and compares sum_k c_k U_k with the
  Hamiltonian it builds from the psi4 FCIDUMP (common practice: second
  quantization, H = E0 + sum h_pq E_pq + 1/2 sum (pq|rs) e_pqrs).
- Floor: any LCU has lambda >= (E_max - E_min)/2 (fact of the trade,
  common practice; triangle inequality), from numpy eigvalsh of the dense H
  and from lam-range when it is built.
- Double factorization one-norm: the closed form lambda_DF derived in
  lam-factor(1), REFLECTION COUNTING, computed here with numpy
  from the FCIDUMP integrals.
- Reconstruction: the two-body integrals rebuilt from the stream agree
  with the FCIDUMP to the stated truncation error, and the discarded weight
  equals the sum of the dropped supermatrix eigenvalues (numpy eigh).
"""
import os
import subprocess
import sys


sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402
lamtest.require_references("numpy", "scipy", "psi4")
import numpy as np  # noqa: E402
import molecules  # noqa: E402
import refops  # noqa: E402

tap = lamtest.Tap()


def read_fcidump(path):
    """(n, e0, h, g) from an FCIDUMP through the tests' own reader."""
    n, _, e0, h, g = refops.read_fcidump(path)
    return n, e0, h, g


def ladder(nmodes):
    """Jordan-Wigner annihilation operators a_j = Z..Z (X + iY)/2 (real)."""
    z = np.diag([1.0, -1.0])
    lower = np.array([[0.0, 1.0], [0.0, 0.0]])
    eye = np.eye(2)
    ops = []
    for j in range(nmodes):
        m = np.array([[1.0]])
        for k in range(nmodes):
            m = np.kron(m, z if k < j else lower if k == j else eye)
        ops.append(m)
    return ops


def dense_hamiltonian(n, e0, h, g):
    """Written as 1/2 sum_{pq,x} a+_px (sum_rs (pq|rs) E_rs) a_qx, the normal
    order of e_pqrs = sum_xy a+_px a+_ry a_sy a_qx."""
    a = ladder(2 * n)
    dim = 4 ** n
    E = [[sum(a[2 * p + x].T @ a[2 * q + x] for x in range(2)) for q in range(n)]
         for p in range(n)]
    H = e0 * np.eye(dim)
    for p in range(n):
        for q in range(n):
            H += h[p, q] * E[p][q]
            inner = sum(g[p, q, r, s] * E[r][s] for r in range(n) for s in range(n))
            for x in range(2):
                H += 0.5 * a[2 * p + x].T @ inner @ a[2 * q + x]
    return H


def parse_fragments(text):
    """{meta}, constant, {f: U}, [(c, f, [(i, spin)...])] from a stream."""
    meta, const, rot, terms = {}, 0.0, {}, []
    n = None
    for line in text.splitlines():
        if line.startswith("#%"):
            key, _, val = line[2:].strip().partition(":")
            meta[key.strip()] = val.strip()
            continue
        if not line.strip() or line.startswith("#"):
            continue
        f = line.split()
        c = float(f[0])
        if len(f) == 1:
            const += c
        elif f[1] == "U":
            n = int(meta["orbitals"])
            rot.setdefault(int(f[2]), np.zeros((n, n)))[int(f[3]), int(f[4])] = c
        else:
            modes = [(int(t[:-1]), "ab".index(t[-1])) for t in f[3:]]
            terms.append((c, int(f[2]), modes))
    return meta, const, rot, terms


def dense_lcu(n, const, rot, terms):
    """sum_k c_k U_k; the reflections of one fragment commute, so each
    fragment is summed as sum_a R_a (c_a + sum_{b>a} c_ab R_b)."""
    a = ladder(2 * n)
    dim = 4 ** n
    total = const * np.eye(dim)
    by_frag = {}
    for c, f, modes in terms:
        by_frag.setdefault(f, []).append((c, modes))
    for f, items in by_frag.items():
        u = rot.get(f, np.eye(n))
        refl = {}
        for i in range(n):
            for s in range(2):
                b = sum(u[p, i] * a[2 * p + s] for p in range(n))
                refl[(i, s)] = np.eye(dim) - 2.0 * b.T @ b
        inner = {}
        for c, modes in items:
            first = modes[0]
            m = inner.setdefault(first, np.zeros((dim, dim)))
            m += c * (refl[modes[1]] if len(modes) == 2 else np.eye(dim))
        for first, m in inner.items():
            total += refl[first] @ m
    return total


def two_body_from_fragments(n, rot, terms):
    """(pq|rs) rebuilt from the pair terms: c R_i R_j with R = 1 - 2 n gives
    4 c n_i n_j, i.e. lambda_ij = 4 c in U (sum lambda_ij n_i n_j) U^T
    (fragments with single reflections only, such as the one-body
    fragment, add nothing)."""
    rebuilt = np.zeros((n,) * 4)
    for f, u in rot.items():
        lam = np.zeros((n, n))
        for c, ff, modes in terms:
            if ff == f and len(modes) == 2:
                (i, _), (j, _) = modes
                lam[i, j] = lam[j, i] = 4.0 * c
        v = np.einsum("pi,qi->pqi", u, u)
        rebuilt += np.einsum("pqi,ij,rsj->pqrs", v, lam, v)
    return rebuilt


def factor(fcidump, *args):
    ints = lamtest.run("lam-ints", [fcidump], check=True)[1]
    rc, out, err = lamtest.run("lam-factor", list(args), stdin=ints)
    if rc != 0:
        raise RuntimeError("lam-factor %s: %s" % (" ".join(args), err))
    return out


def lambda_df_formula(n, h, g):
    """lambda_DF of lam-factor(1) from the supermatrix with numpy."""
    T = h - 0.5 * np.einsum("prrq->pq", g) + np.einsum("pqrr->pq", g)
    lam = np.abs(np.linalg.eigvalsh(T)).sum()
    w, z = np.linalg.eigh(g.reshape(n * n, n * n))
    for l in range(len(w)):
        if abs(w[l]) < 1e-14:
            continue
        eps = np.linalg.eigvalsh(z[:, l].reshape(n, n))
        lam += abs(w[l]) * (0.5 * np.abs(eps).sum() ** 2 - 0.25 * (eps ** 2).sum())
    return lam


def lam_range_half(fcidump):
    """Fock-space half range from lam-range, or None if not built yet."""
    if not os.path.exists(os.path.join(lamtest.BIN, "lam-range")):
        return None
    ints = lamtest.run("lam-ints", [fcidump], check=True)[1]
    rc, out, _ = lamtest.run("lam-range", [], stdin=ints)
    if rc != 0:
        return None
    return lamtest.report(out).get("fock_half_range")


for name in ("h2", "h3plus", "h4chain"):
    path, _ = molecules.reference(name)
    n, e0, h, g = read_fcidump(path)
    H = dense_hamiltonian(n, e0, h, g)
    spectrum = np.linalg.eigvalsh(H)
    half_range = 0.5 * (spectrum[-1] - spectrum[0])
    from_range = lam_range_half(path)
    for method, args in (("double", ["--method", "double"]),
                         ("full-rank", ["--method", "full-rank", "--tol", "1e-11"])):
        meta, const, rot, terms = parse_fragments(factor(path, *args))
        lcu = dense_lcu(n, const, rot, terms)
        diff = np.abs(lcu - H).max()
        tap.ok(diff <= 1e-9, "%s %s: sum c_k U_k equals dense H to 1e-9" % (name, method),
               "max |difference| %.3g" % diff)
        for f, u in rot.items():
            if abs(np.linalg.det(u) - 1.0) > 1e-10 or np.abs(u.T @ u - np.eye(n)).max() > 1e-10:
                tap.ok(False, "%s %s: rotation %d proper orthogonal" % (name, method, f))
                break
        else:
            tap.ok(True, "%s %s: every rotation is orthogonal with det +1" % (name, method))
        lam = sum(abs(c) for c, _, _ in terms)
        tap.ok(lam >= half_range - 1e-9,
               "%s %s: lambda %.6f >= Fock-space (E_max - E_min)/2 %.6f (numpy eigvalsh)"
               % (name, method, lam, half_range))
        if from_range is not None:
            tap.ok(lam >= from_range - 1e-9, "%s %s: lambda >= fock_half_range of lam-range"
                   % (name, method), "lambda %r, fock_half_range %r" % (lam, from_range))
        if method == "double":
            tap.near(lam, lambda_df_formula(n, h, g), 1e-9,
                     "%s double: lambda equals lambda_DF of lam-factor(1)" % name)
    if from_range is not None:
        tap.near(from_range, half_range, 1e-8,
                 "%s: lam-range fock_half_range agrees with numpy eigvalsh" % name)

# Reconstruction under truncation, on LiH (frozen core, 5 orbitals).
path, _ = molecules.reference("lih")
n, e0, h, g = read_fcidump(path)
w = np.linalg.eigvalsh(g.reshape(n * n, n * n))
for tol in (1e-3, 1e-2):
    meta, const, rot, terms = parse_fragments(factor(path, "--method", "double", "--tol", str(tol)))
    # The drop rule of the man page: smallest |w| first while the sum stays <= tol.
    mags = np.sort(np.abs(w))
    dropped, k = 0.0, 0
    while k < len(mags) and dropped + mags[k] <= tol:
        dropped += mags[k]
        k += 1
    tap.near(float(meta["discarded-weight"]), dropped, 1e-12,
             "lih tol %g: discarded weight is the sum of the dropped eigenvalues (numpy eigh)" % tol)
    rebuilt = two_body_from_fragments(n, rot, terms)
    err = np.abs(rebuilt - g).max()
    tap.ok(err <= dropped + 1e-12,
           "lih tol %g: integral error %.3g within the discarded weight %.3g" % (tol, err, dropped))
    tap.near(err, float(meta["integral-max-error"]), 1e-12,
             "lih tol %g: stated integral-max-error matches the numpy rebuild" % tol)
    tap.near(np.sqrt(((rebuilt - g) ** 2).sum()), float(meta["integral-norm-error"]), 1e-12,
             "lih tol %g: stated integral-norm-error matches the numpy rebuild" % tol)
    tap.ok(int(meta["fragments"]) < 16, "lih tol %g: truncation drops factors (%s fragments)"
           % (tol, meta["fragments"]))

# Full rank stops once the two-body residual (Frobenius norm) is <= --tol.
for tol in (1e-2, 1e-4):
    meta, const, rot, terms = parse_fragments(factor(path, "--method", "full-rank", "--tol", str(tol)))
    rebuilt = two_body_from_fragments(n, rot, terms)
    resid = np.sqrt(((rebuilt - g) ** 2).sum())
    tap.ok(resid <= tol, "lih full-rank tol %g: numpy residual %.3g within tol" % (tol, resid))
    tap.near(resid, float(meta["integral-norm-error"]), 1e-12,
             "lih full-rank tol %g: stated integral-norm-error matches the numpy rebuild" % tol)

# H - K from lam-shift: K vanishes on the N-electron states (lam-shift(1),
# the symmetry shift), so the fragments of H - K, built as dense matrices, must
# act as H does on the N-electron block; and lambda >= the half range of H on
# that block (fact of the trade, common practice).
if os.path.exists(os.path.join(lamtest.BIN, "lam-shift")):
    for name, nelec in (("h2", 2), ("h4chain", 4)):
        path, _ = molecules.reference(name)
        n, e0, h, g = read_fcidump(path)
        H = dense_hamiltonian(n, e0, h, g)
        block = [k for k in range(4 ** n) if bin(k).count("1") == nelec]
        Hn = H[np.ix_(block, block)]
        ev = np.linalg.eigvalsh(Hn)
        ints = lamtest.run("lam-ints", [path], check=True)[1]
        shifted = lamtest.run("lam-shift", ["--report", os.devnull], stdin=ints, check=True)[1]
        for method, args in (("double", []), ("full-rank", ["--method", "full-rank", "--tol", "1e-11"])):
            rc, out, err = lamtest.run("lam-factor", args, stdin=shifted)
            if not tap.ok(rc == 0, "%s %s: lam-factor takes H - K" % (name, method), err):
                continue
            meta, const, rot, terms = parse_fragments(out)
            lcu = dense_lcu(n, const, rot, terms)
            diff = np.abs(lcu[np.ix_(block, block)] - Hn).max()
            tap.ok(diff <= 1e-9, "%s %s: fragments of H - K equal H on the %d-electron block"
                   % (name, method, nelec), "max |difference| %.3g" % diff)
            lam = sum(abs(c) for c, _, _ in terms)
            tap.ok(lam >= 0.5 * (ev[-1] - ev[0]) - 1e-9,
                   "%s %s: lambda(H - K) %.6f >= N-block half range %.6f"
                   % (name, method, lam, 0.5 * (ev[-1] - ev[0])))
else:
    tap.ok(True, "# SKIP lam-shift not built")

tap.done()
