#!/usr/bin/python3
"""lam-group against references outside the project.

Molecules of our own scenario (tests/lib/molecules.py; psi4 writes the
integrals).  For each, `lam-ints | lam-map | lam-group` without and with
`lam-shift`, and checks:
- every pair in a group anticommutes, decided here letter by letter (two
  Pauli strings anticommute when they differ on an odd number of qubits
  where both act: common practice);
- for small groups, numpy: (sum c_i P_i)^2 = (sum c_i^2) I as matrices
  (common practice: the reason a group is one unitary);
- the grouped stream is the same operator (lines of one string add up);
- lambda_grouped <= lambda, and lambda_grouped >= the Fock-space half
  range of the operator (any LCU of A has one-norm >= (E_max - E_min)/2,
  common practice), the half range from numpy/scipy eigenvalues of the
  operator built here from the stream;
- with the shift, lambda_grouped >= n_half_range (the floor on the
  N-electron block), from numpy on that block;
- the rule of thumb of the trade (common practice): shift plus
  grouping lowers the one-norm by about a factor of three against the
  plain Pauli one-norm; asserted loosely as a factor of at least 2.
"""
import os
import sys

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402
lamtest.require_references("numpy", "scipy", "psi4")
import molecules  # noqa: E402
import refops  # noqa: E402
import numpy as np  # noqa: E402
import scipy.sparse  # noqa: E402
import scipy.sparse.linalg  # noqa: E402

t = lamtest.Tap()


def parse(text):
    """(qubits, [(coef, {qubit: letter}, group or None)]) from a stream."""
    nq, rows = refops.stream_rows(text, "qubits")
    terms = []
    for fields in rows:
        group = None
        if fields[-1].startswith("@"):
            group = int(fields.pop()[1:])
        ops = {q: letter for letter, q in refops.parse_pauli_fields(fields[1:])}
        terms.append((float(fields[0]), ops, group))
    return nq or 0, terms


def anticommute(a, b):
    return sum(1 for q, l in a.items() if q in b and b[q] != l) % 2 == 1


def key(ops):
    return tuple(sorted(ops.items()))


def pauli_action(ops, dim):
    """Columns b -> rows b ^ x with values i^nY (-1)^popcount(b & z):
    X flips the bit, Z gives (-1)^bit, Y = i X Z (qubit j = bit j)."""
    x = z = ny = 0
    for q, l in ops.items():
        if l in "XY":
            x |= 1 << q
        if l in "YZ":
            z |= 1 << q
        ny += l == "Y"
    b = np.arange(dim)
    parity = np.zeros(dim, dtype=np.int64)
    zz = b & z
    while zz.any():
        parity ^= zz & 1
        zz >>= 1
    return b ^ x, (1j ** ny) * (1 - 2 * parity)


def matrix(terms, nq, sparse=False):
    dim = 1 << nq
    rows, cols, vals = [], [], []
    for c, ops, _ in terms:
        r, v = pauli_action(ops, dim)
        rows.append(r)
        cols.append(np.arange(dim))
        vals.append(c * v)
    m = scipy.sparse.coo_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                                shape=(dim, dim)).tocsr()
    return m if sparse else m.toarray()


def half_range(terms, nq):
    if nq <= 10:
        w = np.linalg.eigvalsh(matrix(terms, nq))
        return (w[-1] - w[0]) / 2
    m = matrix(terms, nq, sparse=True)
    hi = scipy.sparse.linalg.eigsh(m, k=1, which="LA", tol=1e-12)[0][0]
    lo = scipy.sparse.linalg.eigsh(m, k=1, which="SA", tol=1e-12)[0][0]
    return (hi - lo) / 2


def n_half_range(terms, nq, electrons):
    """Half range on the N-electron block (Jordan-Wigner: a set bit is an
    occupied spin orbital)."""
    m = matrix(terms, nq, sparse=True)
    keep = [b for b in range(1 << nq) if bin(b).count("1") == electrons]
    w = np.linalg.eigvalsh(m[keep][:, keep].toarray())
    return (w[-1] - w[0]) / 2


def merged(terms):
    out = {}
    for c, ops, _ in terms:
        out[key(ops)] = out.get(key(ops), 0.0) + c
    return out


def check_stream(name, pauli_text, electrons=None):
    code, out, err, rep = lamtest.run_with_report("lam-group", [], stdin=pauli_text)
    if not t.ok(code == 0, "%s: lam-group runs" % name, err):
        return None
    nq, terms = parse(out)
    _, before = parse(pauli_text)
    groups = {}
    for c, ops, g in terms:
        if g is not None:
            groups.setdefault(g, []).append((c, ops))
    bad = [(g, a[1], b[1]) for g, m in groups.items()
           for i, a in enumerate(m) for b in m[i + 1:] if not anticommute(a[1], b[1])]
    t.ok(not bad, "%s: every pair of a group anticommutes (own check)" % name, bad[:3])
    t.ok(all(not ops for c, ops, g in terms if g is None), "%s: only the identity is unlabelled" % name)
    own = sum(np.sqrt(sum(c * c for c, _ in m)) for m in groups.values())
    t.near(own, rep["lambda_grouped"], 1e-12, "%s: lambda_grouped recomputed" % name, rel=True)
    t.ok(len(groups) == rep["groups"], "%s: group count" % name)
    a, b = merged(before), merged(terms)
    diff = max(abs(a.get(k, 0.0) - b.get(k, 0.0)) for k in set(a) | set(b))
    t.ok(diff < 1e-12, "%s: same operator after grouping" % name, "largest difference %g" % diff)
    lam = sum(abs(c) for k, c in a.items() if k)
    t.near(rep["lambda"], lam, 1e-12, "%s: lambda" % name, rel=True)
    t.ok(rep["lambda_grouped"] <= lam * (1 + 1e-12), "%s: lambda_grouped <= lambda" % name)
    floor = half_range([x for x in terms if x[1]], nq)
    t.ok(rep["lambda_grouped"] >= floor * (1 - 1e-10),
         "%s: lambda_grouped %.6f >= Fock half range %.6f" % (name, rep["lambda_grouped"], floor))
    norm = lamtest.report(lamtest.run("lam-norm", [], stdin=out, check=True)[1])
    t.near(norm.get("lambda_grouped"), rep["lambda_grouped"], 1e-12,
           "%s: lam-norm reads the same lambda_grouped" % name, rel=True)
    if nq <= 10 and os.path.exists(os.path.join(lamtest.BIN, "lam-range")):
        rng = lamtest.report(lamtest.run("lam-range", ["--quiet"], stdin=out, check=True)[1])
        t.near(rng.get("fock_half_range"), floor, 1e-8,
               "%s: lam-range's fock_half_range agrees with numpy" % name, rel=True)
    if nq <= 6:
        worst = 0.0
        for m in groups.values():
            gm = matrix([(c, ops, None) for c, ops in m], nq)
            sq = gm @ gm
            worst = max(worst, abs(sq - sum(c * c for c, _ in m) * np.eye(1 << nq)).max())
        t.ok(worst < 1e-12, "%s: (sum c P)^2 = (sum c^2) I for every group (numpy)" % name, worst)
    if electrons is not None:
        nfloor = n_half_range([x for x in terms if x[1]], nq, electrons)
        t.ok(rep["lambda_grouped"] >= nfloor * (1 - 1e-10),
             "%s: lambda_grouped %.6f >= n_half_range %.6f" % (name, rep["lambda_grouped"], nfloor))
        return rep["lambda_grouped"], nfloor
    return rep["lambda_grouped"], None


for mol in ["h2", "h3plus", "h4chain", "lih", "h2o"]:
    fcidump, ref = molecules.reference(mol)
    sf = lamtest.run("lam-ints", [fcidump], check=True)[1]
    electrons = int([ln for ln in sf.splitlines() if ln.startswith("#% electrons:")][0].split(":")[1])
    plain = lamtest.pipe(("lam-map", []), stdin=sf)
    check_stream(mol, plain)
    if not os.path.exists(os.path.join(lamtest.BIN, "lam-shift")):
        t.ok(True, "# skip %s shifted: lam-shift not built" % mol)
        continue
    shifted = lamtest.pipe(("lam-shift", []), ("lam-map", []), stdin=sf)
    res = check_stream(mol + " shifted", shifted, electrons)
    if res:
        plain_lambda = lamtest.report(lamtest.run("lam-norm", [], stdin=plain, check=True)[1])["lambda"]
        t.ok(plain_lambda / res[0] >= 2.0,
             "%s: shift + grouping lowers lambda by %.2f (rule of thumb: about 3)" % (mol, plain_lambda / res[0]))

t.done()
