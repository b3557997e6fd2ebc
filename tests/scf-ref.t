#!/usr/bin/python3
"""lam-scf against psi4 (Debian package), an independent reference.

- RHF energies of ten molecules (one a cation, one stretched) in STO-3G, 6-31G and cc-pVDZ (spherical
  and Cartesian d shells), psi4 with scf_type pk and tight convergence,
  to 1e-8 Eh.  Geometries are ours (angstrom).
- The same molecule through lam-scf's FCIDUMP and psi4's fcidump(): the
  same lam-range Fock-space and N-electron extremes to 1e-7 Eh, and the
  same lam-norm lambda where no orbitals are degenerate (orbital signs
  leave lambda unchanged, a rotation among degenerate orbitals does not).
  psi4's FCIDUMP with frozen core misses one-body lines (observed here),
  so these comparisons use all-electron files.
- Frozen core: lam-scf --frozen 1 gives psi4's frozen-core FCI energy as
  the lowest N-electron eigenvalue (lam-range), to 1e-8 Eh.
- Frozen core and active space: the core folded into psi4's all-electron
  integrals with numpy here (E0 + 2 h_cc + (cc|cc), h_pq + 2 (pq|cc) -
  (pc|cq); textbook formulas, common practice) and the virtual orbitals
  dropped give the same N-electron extremes as lam-scf --frozen 1
  --active 5, to 1e-7 Eh.
"""
import hashlib
import json
import os
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402
import molecules  # noqa: E402
import refops  # noqa: E402
import numpy as np  # noqa: E402

tap = lamtest.Tap()

ENERGY_CASES = [
    # name, geometry (angstrom), basis, puream (None: as the set is defined)
    ("h2o", "O 0 0 0.1173\nH 0 0.7572 -0.4692\nH 0 -0.7572 -0.4692", "cc-pvdz", None),
    ("h2o-cart", "O 0 0 0.1173\nH 0 0.7572 -0.4692\nH 0 -0.7572 -0.4692", "cc-pvdz", False),
    ("nh3", "N 0 0 0.1162\nH 0 0.9377 -0.2711\nH 0.8121 -0.4689 -0.2711\n"
            "H -0.8121 -0.4689 -0.2711", "6-31g", None),
    ("hf", "F 0 0 0\nH 0 0 0.9168", "cc-pvdz", None),
    ("n2", "N 0 0 0\nN 0 0 1.0977", "6-31g", None),
    ("ch4", "C 0 0 0\nH 0.6291 0.6291 0.6291\nH -0.6291 -0.6291 0.6291\n"
            "H -0.6291 0.6291 -0.6291\nH 0.6291 -0.6291 -0.6291", "sto-3g", None),
    ("hcl", "Cl 0 0 0\nH 0 0 1.2746", "6-31g", None),
    ("sih4", "Si 0 0 0\nH 0.8544 0.8544 0.8544\nH -0.8544 -0.8544 0.8544\n"
             "H -0.8544 0.8544 -0.8544\nH 0.8544 -0.8544 -0.8544", "sto-3g", None),
    ("hco+", "H 0 0 -1.09\nC 0 0 0\nO 0 0 1.11", "cc-pvdz", None),
    # a stretched bond: the core-Hamiltonian start ends 0.055 Eh higher,
    # the atomic-density start reaches psi4's state
    ("n2-stretched", "N 0 0 0\nN 0 0 1.9", "cc-pvdz", None),
]
CHARGE = {"hco+": 1}

PSI4_ENERGIES = r'''
import json, sys
import psi4
cases = json.load(open(sys.argv[1]))
psi4.set_output_file(sys.argv[2] + ".out", False)
psi4.set_memory("1 GB")
out = {}
for name, geom, charge, basis, puream in cases:
    psi4.core.clean()
    psi4.core.clean_options()
    psi4.geometry("%d 1\n%s\nsymmetry c1\nno_reorient\nno_com\n" % (charge, geom))
    opts = {"basis": basis, "scf_type": "pk", "e_convergence": 1e-12, "d_convergence": 1e-10}
    if puream is not None:
        opts["puream"] = puream
    psi4.set_options(opts)
    out[name] = psi4.energy("scf")
json.dump(out, open(sys.argv[2], "w"))
'''


def psi4_energies(cases):
    """psi4 RHF energies, cached under build/testdata by a hash of the input."""
    spec = json.dumps(cases, sort_keys=True)
    key = hashlib.sha1((spec + PSI4_ENERGIES).encode()).hexdigest()[:16]
    os.makedirs(molecules.CACHE, exist_ok=True)
    path = os.path.join(molecules.CACHE, "scf-ref-%s.json" % key)
    if not os.path.exists(path):
        tmpdir = tempfile.mkdtemp(dir=molecules.CACHE)
        cj, oj = os.path.join(tmpdir, "cases.json"), os.path.join(tmpdir, "out.json")
        with open(cj, "w") as f:
            f.write(spec)
        cmd, env = molecules.psi4_python()
        subprocess.run(cmd + ["-c", PSI4_ENERGIES, cj, oj], check=True, env=env,
                       cwd=tmpdir, stdout=subprocess.DEVNULL)
        os.replace(oj, path)
    with open(path) as f:
        return json.load(f)


def lam_scf(geom, *args):
    rc, out, err = lamtest.run("lam-scf", ["--quiet"] + list(args), stdin=geom)
    return rc, out, err


def lam_report(prog, stream, *args):
    rc, out, err = lamtest.run(prog, ["--quiet"] + list(args) if prog == "lam-range"
                               else list(args), stdin=stream)
    if rc != 0:
        tap.ok(False, "%s %s ran" % (prog, " ".join(args)), err)
        return {}
    return lamtest.report(out)


def ints(fcidump_text):
    return lamtest.run("lam-ints", [], stdin=fcidump_text, check=True)[1]


# ---- RHF energies against psi4
cases = [(n, g, CHARGE.get(n, 0), b, p) for n, g, b, p in ENERGY_CASES]
ref = psi4_energies(cases)
for name, geom, charge, basis, puream in cases:
    args = ["--energy", "--basis", basis, "--charge", str(charge)]
    if puream is not None:
        args.append("--spherical" if puream else "--cartesian")
    rc, out, err = lam_scf(geom, *args)
    if not tap.ok(rc == 0, "%s/%s: lam-scf runs" % (name, basis), err):
        continue
    got = lamtest.report(out)["scf_energy"]
    tap.near(got, ref[name], 1e-8, "%s/%s%s: RHF energy = psi4 %.10f Eh" % (
        name, basis, " Cartesian d" if puream is False else "", ref[name]))

# ---- the same molecule through both FCIDUMPs
for base in ("h2o", "lih"):
    geom, charge, basis, _ = molecules.MOLECULES[base]
    molecules.MOLECULES[base + "-ae"] = (geom, charge, basis, False)

COMPARE = [  # name, orbitals non-degenerate (lambda comparable)
    ("h2", True), ("h4chain", True), ("h3plus", False), ("h2o-ae", True), ("lih-ae", False)]
for name, nondegenerate in COMPARE:
    path, info = molecules.reference(name)
    geom, charge, basis, _ = molecules.MOLECULES[name]
    rc, ours, err = lam_scf(geom, "--basis", basis, "--charge", str(charge))
    if not tap.ok(rc == 0, "%s: lam-scf FCIDUMP" % name, err):
        continue
    with open(path) as f:
        theirs = f.read()
    a, b = ints(ours), ints(theirs)
    ra, rb = lam_report("lam-range", a), lam_report("lam-range", b)
    for key in ("fock_min", "fock_max", "n_min", "n_max"):
        tap.near(ra.get(key), rb.get(key, float("nan")), 1e-7,
                 "%s: lam-range %s from lam-scf = from psi4's fcidump" % (name, key))
    tap.near(ra.get("n_min"), info["fci"], 1e-8, "%s: lowest N-electron eigenvalue = psi4 FCI %.10f"
             % (name, info["fci"]))
    if nondegenerate:
        na, nb = lam_report("lam-norm", a), lam_report("lam-norm", b)
        tap.near(na.get("lambda"), nb.get("lambda", float("nan")), 1e-7,
                 "%s: lam-norm lambda from lam-scf = from psi4's fcidump" % name)

# ---- frozen core: psi4's frozen-core FCI energy
for name in ("h2o", "lih"):
    path, info = molecules.reference(name)
    geom, charge, basis, fc = molecules.MOLECULES[name]
    rc, ours, err = lam_scf(geom, "--basis", basis, "--frozen", str(info["frozen"]))
    if not tap.ok(rc == 0, "%s: lam-scf --frozen %d" % (name, info["frozen"]), err):
        continue
    r = lam_report("lam-range", ints(ours), "--lowest")
    tap.near(r.get("n_min"), info["fci"], 1e-8,
             "%s --frozen %d: lowest N-electron eigenvalue = psi4 frozen-core FCI %.10f"
             % (name, info["frozen"], info["fci"]))
    rc, out, err = lam_scf(geom, "--basis", basis, "--energy")
    tap.near(lamtest.report(out).get("scf_energy"), info["scf"], 1e-8,
             "%s: RHF energy = psi4 %.10f" % (name, info["scf"]))

# ---- frozen core + active space against numpy folding of psi4's integrals


def write_fcidump(nelec, e0, h, g):
    n = h.shape[0]
    out = ["&FCI NORB=%d,NELEC=%d,MS2=0," % (n, nelec),
           " ORBSYM=%s" % ("1," * n), " ISYM=1,", "&END"]
    for p in range(n):
        for q in range(p + 1):
            for r in range(n):
                for t in range(r + 1):
                    if p * (p + 1) // 2 + q >= r * (r + 1) // 2 + t and g[p, q, r, t] != 0:
                        out.append("%.17e %d %d %d %d" % (g[p, q, r, t], p + 1, q + 1, r + 1, t + 1))
    for p in range(n):
        for q in range(p + 1):
            if h[p, q] != 0:
                out.append("%.17e %d %d 0 0" % (h[p, q], p + 1, q + 1))
    out.append("%.17e 0 0 0 0" % e0)
    return "\n".join(out) + "\n"


path, info = molecules.reference("h2o-ae")
norb, nelec, e0, h, g = refops.read_fcidump(path)
core, act = [0], list(range(1, 6))
e0f = e0 + sum(2 * h[c, c] for c in core) + sum(
    2 * g[c, c, d, d] - g[c, d, d, c] for c in core for d in core)
hf = h + sum(2 * g[:, :, c, c] - g[:, c, c, :] for c in core)
ref_text = write_fcidump(nelec - 2 * len(core), e0f, hf[np.ix_(act, act)],
                         g[np.ix_(act, act, act, act)])
geom, charge, basis, _ = molecules.MOLECULES["h2o-ae"]
rc, ours, err = lam_scf(geom, "--basis", basis, "--frozen", "1", "--active", "5")
if tap.ok(rc == 0, "h2o: lam-scf --frozen 1 --active 5", err):
    like = ours.splitlines()[0]
    tap.ok("NORB=5" in like and "NELEC=8" in like, "h2o --frozen 1 --active 5: NORB=5, NELEC=8", like)
    ra = lam_report("lam-range", ints(ours))
    rb = lam_report("lam-range", ints(ref_text))
    for key in ("n_min", "n_max", "fock_min", "fock_max"):
        tap.near(ra.get(key), rb.get(key, float("nan")), 1e-7,
                 "h2o --frozen 1 --active 5: lam-range %s = numpy folding of psi4's integrals" % key)

tap.done()
