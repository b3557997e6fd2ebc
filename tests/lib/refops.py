"""Reference operators built independently of lamina, with numpy/scipy.

Everything here starts again from the definitions, not from the project's
code: an FCIDUMP parser (Knowles and Handy, 1989: namelist header, then
"value i j k l" lines, 8-fold symmetry of real orbitals), Jordan-Wigner
ladder matrices on the occupation basis (basis index bit j = occupation of
mode j; a_j carries the sign (-1)^(occupations of modes below j): common
practice), the fermionic Hamiltonian as a sparse matrix, the matrix of a
pauli stream, and the binary matrices of the parity and Bravyi-Kitaev
encodings (the Bravyi-Kitaev matrix from its recursive definition, Seeley,
Richard and Love, J. Chem. Phys. 137, 224109 (2012), from memory, truncated
to the mode count).
"""
import re

import numpy as np
import scipy.sparse as sp


def read_fcidump(path):
    """(norb, nelec, e0, h, g) with g[p,q,r,s] = (pq|rs), 0-based."""
    text = open(path).read()
    end = re.search(r"(&END|/|\$END)", text, re.IGNORECASE)
    header, body = text[:end.start()], text[end.end():]
    norb = int(re.search(r"NORB\s*=\s*(\d+)", header, re.IGNORECASE).group(1))
    nelec = int(re.search(r"NELEC\s*=\s*(\d+)", header, re.IGNORECASE).group(1))
    h = np.zeros((norb, norb))
    g = np.zeros((norb,) * 4)
    e0 = 0.0
    for line in body.splitlines():
        f = line.split()
        if len(f) != 5:
            continue
        v = float(f[0].replace("D", "E").replace("d", "e"))
        i, j, k, l = (int(x) - 1 for x in f[1:])
        if i < 0:
            e0 = v
        elif k < 0:
            if j >= 0:
                h[i, j] = h[j, i] = v
        else:
            for a, b, c, d in ((i, j, k, l), (j, i, k, l), (i, j, l, k), (j, i, l, k),
                               (k, l, i, j), (l, k, i, j), (k, l, j, i), (l, k, j, i)):
                g[a, b, c, d] = v
    return norb, nelec, e0, h, g


def annihilators(nmodes):
    """Sparse a_j on the 2^nmodes occupation basis (bit j = mode j)."""
    dim = 1 << nmodes
    states = np.arange(dim)
    ops = []
    for j in range(nmodes):
        occupied = (states >> j) & 1 == 1
        src = states[occupied]
        below = src & ((1 << j) - 1)
        sign = np.array([(-1) ** bin(int(b)).count("1") for b in below], dtype=float)
        ops.append(sp.csr_matrix((sign, (src ^ (1 << j), src)), shape=(dim, dim)))
    return ops


def spin_mode(p, spin, norb, order):
    return 2 * p + spin if order == "interleaved" else spin * norb + p


def fermion_hamiltonian(norb, e0, h, g, order="interleaved"):
    """H = e0 + sum h_pq a+_ps a_qs + 1/2 sum (pq|rs) a+_ps a+_rt a_st a_qs."""
    nmodes = 2 * norb
    a = annihilators(nmodes)
    ad = [x.T.tocsr() for x in a]
    dim = 1 << nmodes
    H = sp.identity(dim, format="csr") * e0
    # E^s_pq as sparse products once
    E = {}
    for p in range(norb):
        for q in range(norb):
            for s in range(2):
                E[p, q, s] = ad[spin_mode(p, s, norb, order)] @ a[spin_mode(q, s, norb, order)]
    for p in range(norb):
        for q in range(norb):
            if h[p, q] != 0:
                H = H + h[p, q] * (E[p, q, 0] + E[p, q, 1])
    # a+_ps a+_rt a_st a_qs = E^s_pq E^t_rs - delta_qr delta_st E^s_ps
    for p in range(norb):
        for q in range(norb):
            for r in range(norb):
                for s in range(norb):
                    v = 0.5 * g[p, q, r, s]
                    if v == 0:
                        continue
                    for x in range(2):
                        for y in range(2):
                            term = E[p, q, x] @ E[r, s, y]
                            if q == r and x == y:
                                term = term - E[p, s, x]
                            H = H + v * term
    return H.tocsr()


def parse_pauli_fields(fields):
    """[(letter, qubit), ...] of a term's fields in the stream's version-2
    spelling ("x:0,3 y:5 z:1-2", lamina-stream(5)); group labels skipped."""
    factors = []
    for f in fields:
        if f.startswith("@"):
            continue
        letter, _, items = f.partition(":")
        if letter not in ("x", "y", "z") or not items:
            raise ValueError("not a version-2 Pauli field: %r" % f)
        for item in items.split(","):
            a, _, b = item.partition("-")
            for q in range(int(a), int(b or a) + 1):
                factors.append((letter.upper(), q))
    return factors


def format_pauli(factors):
    """The canonical version-2 spelling of [(letter, qubit), ...]: letters in
    the order x, y, z, sorted qubits, runs of two or more as a-b."""
    fields = []
    for letter in "XYZ":
        qs = sorted(q for l, q in factors if l == letter)
        items, i = [], 0
        while i < len(qs):
            j = i
            while j + 1 < len(qs) and qs[j + 1] == qs[j] + 1:
                j += 1
            items.append(str(qs[i]) if j == i else "%d-%d" % (qs[i], qs[j]))
            i = j + 1
        if items:
            fields.append(letter.lower() + ":" + ",".join(items))
    return " ".join(fields)


def normal_order(coef, ops):
    """[(c, creators, annihilators)] equal to coef times the product of the
    ladder operators ops = [(mode, is_creator), ...], from the canonical
    anticommutation relations a_i a+_j = delta_ij - a+_j a_i (textbook,
    common practice); products with a mode twice on one side vanish."""
    for k in range(len(ops) - 1):
        (i, ci), (j, cj) = ops[k], ops[k + 1]
        if not ci and cj:  # a_i a+_j
            swapped = ops[:k] + [ops[k + 1], ops[k]] + ops[k + 2:]
            out = [(-c, cr, an) for c, cr, an in normal_order(coef, swapped)]
            if i == j:
                out += normal_order(coef, ops[:k] + ops[k + 2:])
            return out
    cre = [m for m, c in ops if c]
    ann = [m for m, c in ops if not c]
    if len(set(cre)) < len(cre) or len(set(ann)) < len(ann):
        return []
    return [(coef, cre, ann)]


def fermion_line(coef, cre, ann):
    """One version-2 fermion term: creators, '/', annihilators."""
    if not cre and not ann:
        return "%.17g" % coef
    return " ".join(["%.17g" % coef] + [str(m) for m in cre] + ["/"] + [str(m) for m in ann])


def stream_rows(text, size_key):
    """(the whole number in header line '#% size_key:' or None, the fields
    of every term line of a stream)."""
    size, rows = None, []
    for line in text.splitlines():
        if line.startswith("#% " + size_key + ":"):
            size = int(line.split(":")[1])
        if line.strip() and not line.startswith("#"):
            rows.append(line.split())
    return size, rows


def parse_pauli_stream(text):
    """[(coef, [(letter, qubit), ...])], and the 'qubits' header value."""
    nq, rows = stream_rows(text, "qubits")
    return [(float(f[0]), parse_pauli_fields(f[1:])) for f in rows], nq


def pauli_matrix(terms, nqubits):
    """Sparse matrix of sum c P with qubit j = bit j of the basis index;
    X flips a bit, Z gives (-1)^bit, Y = i X Z (Pauli matrices, common practice)."""
    dim = 1 << nqubits
    states = np.arange(dim)
    H = sp.csr_matrix((dim, dim), dtype=complex)
    rows_all, cols_all, vals_all = [], [], []
    for c, factors in terms:
        flip, phase = 0, np.ones(dim, dtype=complex)
        # apply the factors right to left on |b>: for one qubit each, order is irrelevant
        for letter, q in factors:
            bit = (states >> q) & 1
            if letter == "X":
                flip |= 1 << q
            elif letter == "Z":
                phase = phase * np.where(bit == 1, -1, 1)
            elif letter == "Y":
                # Y|0> = i|1>, Y|1> = -i|0>
                phase = phase * np.where(bit == 1, -1j, 1j)
                flip |= 1 << q
            else:
                raise ValueError(letter)
        rows_all.append(states ^ flip)
        cols_all.append(states)
        vals_all.append(c * phase)
    if rows_all:
        H = sp.csr_matrix((np.concatenate(vals_all),
                           (np.concatenate(rows_all), np.concatenate(cols_all))),
                          shape=(dim, dim))
    return H


def encoding_matrix(kind, n):
    """Binary matrix A with qubit vector b = A n (mod 2) over n modes."""
    if kind == "jordan-wigner":
        return np.eye(n, dtype=int)
    if kind == "parity":
        return np.tril(np.ones((n, n), dtype=int))
    if kind == "bravyi-kitaev":
        beta = np.ones((1, 1), dtype=int)
        while beta.shape[0] < n:
            m = beta.shape[0]
            low = np.zeros((m, m), dtype=int)
            low[-1, :] = 1
            beta = np.block([[beta, np.zeros((m, m), dtype=int)], [low, beta]])
        return beta[:n, :n]
    raise ValueError(kind)


def basis_permutation(A):
    """perm[occupation index] = qubit index, b = A n mod 2."""
    n = A.shape[0]
    perm = np.zeros(1 << n, dtype=np.int64)
    for idx in range(1 << n):
        occ = np.array([(idx >> j) & 1 for j in range(n)])
        b = A.dot(occ) % 2
        perm[idx] = int(sum(int(v) << j for j, v in enumerate(b)))
    return perm


def sector_ground(H, nmodes, nelec):
    """Lowest eigenvalue of H on the states with nelec occupied modes."""
    states = [i for i in range(1 << nmodes) if bin(i).count("1") == nelec]
    sub = H[states][:, states].toarray()
    return float(np.linalg.eigvalsh(sub)[0])


def pauli_coefficients(H, nqubits):
    """All 4^n Pauli coefficients c(x, z) = Tr(P(x,z)^+ H) / 2^n of a dense
    matrix, with P(x,z) = i^(x.z) X^x Z^z (so x=z=1 on a qubit is Y):
    Tr(P^+ H) = i^-(x.z) sum_b (-1)^(z.b) H[b^x, b], the sum over b being a
    Walsh-Hadamard transform for each x.  Returns an array [x, z]."""
    dim = 1 << nqubits
    H = np.asarray(H)
    b = np.arange(dim)
    out = np.zeros((dim, dim), dtype=complex)
    for x in range(dim):
        v = H[b ^ x, b].astype(complex)
        # fast Walsh-Hadamard transform: w[z] = sum_b (-1)^(z.b) v[b]
        h = 1
        while h < dim:
            v = v.reshape(-1, 2, h)
            v = np.stack((v[:, 0, :] + v[:, 1, :], v[:, 0, :] - v[:, 1, :]), axis=1)
            v = v.reshape(dim)
            h *= 2
        out[x, :] = v
    pc = np.array([[bin(x & z).count("1") for z in range(dim)] for x in range(dim)])
    return out * (1j ** (-pc)) / dim


def koridon_lambda(h, g):
    """The closed-form Majorana one-norm of real symmetric integrals
    (Koridon et al., Phys. Rev. Research 3, 033127 (2021), from memory):
    sum_pq |h_pq + sum_r (pq|rr) - 1/2 sum_r (pr|rq)| + 1/4 sum |(pq|rs)|
    + 1/2 sum_{p>r, q>s} |(pq|rs) - (ps|rq)|."""
    n = h.shape[0]
    t = h + np.einsum("pqrr->pq", g) - 0.5 * np.einsum("prrq->pq", g)
    lam = np.abs(t).sum() + 0.25 * np.abs(g).sum()
    anti = g - np.einsum("psrq->pqrs", g)
    for p in range(n):
        for r in range(p):
            for q in range(n):
                for s in range(q):
                    lam += 0.5 * abs(anti[p, q, r, s])
    return lam


def read_spinfree(text):
    """(n, e0, h, g) of a spinfree stream: 'c p q r s' is c e_pqrs, spread
    as 1/2 (g_pqrs + g_rspq) so that H = e0 + h E + 1/2 g e."""
    n, rows = stream_rows(text, "orbitals")
    terms = [(float(f[0]), [int(x) for x in f[1:]]) for f in rows]
    h, g, e0 = np.zeros((n, n)), np.zeros((n,) * 4), 0.0
    for c, idx in terms:
        if not idx:
            e0 += c
        elif len(idx) == 2:
            h[idx[0], idx[1]] += c
        else:
            p, q, r, s = idx
            g[p, q, r, s] += c
            g[r, s, p, q] += c
    return n, e0, h, g
