#!/usr/bin/python3
"""lam-scf against psi4 (Debian package), an independent reference.

- RHF energies of ten molecules (one a cation, one stretched) in STO-3G, 6-31G and cc-pVDZ (spherical
  and Cartesian d shells), psi4 with scf_type pk and tight convergence,
  to 1e-8 Eh.  Geometries are ours (angstrom); water is r(OH) 0.960 A,
  H-O-H 105.0 degrees, written out here.
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
- Symmetry noise: N2 (STO-3G, on the z axis) has exactly as many
  non-zero unique integrals in lam-scf's FCIDUMP as in the MO integrals
  numpy builds from psi4's orbitals (psi4 uses the point group, C2v here,
  so its zeros are exact), counting |value| > 1e-8 Eh.
- Stability (R. Seeger and J. A. Pople, J. Chem. Phys. 66, 3045 (1977),
  from memory): N2 at 1.9 A in cc-pVDZ, where the usual iterations (and
  psi4's) stop at a saddle point: psi4's lowest singlet RHF->RHF stability
  eigenvalue (stability_analysis check) is the one lam-scf --stability
  check reports, to 1e-5 Eh; following it lands lower and stable, the same
  from both starts.
- H2 at 20 A, STO-3G, where the iterations (lam-scf's and psi4's) reach
  the ionic H+ H- saddle: the stable RHF state sigma_g^2 has, for atoms
  this far apart (overlap 1e-52), the closed form
      E = 2 e_H + (AA|AA)/2 - 1/(2R)
  (e_H the STO-3G hydrogen atom energy, (AA|AA) its 1s self-repulsion:
  the textbook minimal-basis dissociation analysis, A. Szabo, N. S.
  Ostlund, Modern Quantum Chemistry (1989), section 3.8.7, from memory);
  e_H and (AA|AA) come here from closed-form Gaussian integrals over the
  published STO-3G contraction (Hehre, Stewart, Pople 1969) and are
  checked against Szabo-Ostlund's -0.4666 Eh and 0.7746 Eh.
"""
import hashlib
import json
import os
import re
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402
lamtest.require_references("numpy", "scipy", "psi4")
import molecules  # noqa: E402
import refops  # noqa: E402
import numpy as np  # noqa: E402

tap = lamtest.Tap()

# our water: r(OH) = 0.960 A, H-O-H = 105.0 degrees, O at the origin,
# the hydrogens at (0, +-0.96 sin 52.5, 0.96 cos 52.5)
WATER = "O 0 0 0\nH 0 0.76161921 0.58441097\nH 0 -0.76161921 0.58441097"

ENERGY_CASES = [
    # name, geometry (angstrom), basis, puream (None: as the set is defined)
    ("h2o", WATER, "cc-pvdz", None),
    ("h2o-cart", WATER, "cc-pvdz", False),
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
    # a stretched bond: psi4 stops at a saddle point (see the stability
    # checks below), which lam-scf reaches with --stability off
    ("n2-stretched", "N 0 0 0\nN 0 0 1.9", "cc-pvdz", None),
]
STABILITY_OFF = {"n2-stretched"}
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
    args = ["--energy-only", "--basis", basis, "--charge", str(charge)]
    if name in STABILITY_OFF:
        args += ["--stability", "off"]
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
    rc, out, err = lam_scf(geom, "--basis", basis, "--energy-only")
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


# ---- the demo's integrals (examples/data, written by lam-scf): psi4's
# frozen-core FCI energy for the same geometry is their lowest eigenvalue
demo = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "examples", "data")
with open(os.path.join(demo, "water.xyz")) as f:
    demo_geom = "\n".join(f.read().splitlines()[2:])
molecules.MOLECULES["water-demo"] = (demo_geom, 0, "sto-3g", True)
path, info = molecules.reference("water-demo")
with open(os.path.join(demo, "water.fcidump")) as f:
    r = lam_report("lam-range", ints(f.read()), "--lowest")
tap.near(r.get("n_min"), info["fci"], 1e-8,
         "examples/data/water.fcidump: lowest 8-electron eigenvalue = psi4 frozen-core FCI %.10f"
         % info["fci"])

# ---- symmetry noise: non-zero unique integrals of N2 against psi4's orbitals
PSI4_N2_COUNT = r'''
import json, sys
import numpy as np
import psi4
psi4.set_output_file(sys.argv[2] + ".out", False)
psi4.set_memory("1 GB")
psi4.geometry("0 1\nN 0 0 0\nN 0 0 1.0977\nno_reorient\nno_com\n")
psi4.set_options({"basis": "sto-3g", "scf_type": "pk", "e_convergence": 1e-12,
                  "d_convergence": 1e-10})
e, wfn = psi4.energy("scf", return_wfn=True)
C = wfn.Ca_subset("AO", "ALL").to_array()
mints = psi4.core.MintsHelper(wfn.basisset())
h = C.T @ (mints.ao_kinetic().to_array() + mints.ao_potential().to_array()) @ C
g = np.einsum("pqrs,pi,qj,rk,sl->ijkl", mints.ao_eri().to_array(), C, C, C, C, optimize=True)
n = C.shape[1]
count = 0
for i in range(n):
    for j in range(i + 1):
        count += abs(h[i, j]) > 1e-8
        for k in range(i + 1):
            for l in range(k + 1):
                if i * (i + 1) // 2 + j >= k * (k + 1) // 2 + l:
                    count += abs(g[i, j, k, l]) > 1e-8
json.dump({"count": int(count), "group": wfn.molecule().schoenflies_symbol()},
          open(sys.argv[2], "w"))
'''

PSI4_N2_STABILITY = r'''
import json, re, sys
import psi4
psi4.set_output_file(sys.argv[2] + ".out", False)
psi4.set_memory("1 GB")
psi4.geometry("0 1\nN 0 0 0\nN 0 0 1.9\nsymmetry c1\nno_reorient\nno_com\n")
psi4.set_options({"basis": "cc-pvdz", "scf_type": "pk", "e_convergence": 1e-10,
                  "d_convergence": 1e-8, "stability_analysis": "check"})
e = psi4.energy("scf")
text = open(sys.argv[2] + ".out").read()
block = text.split("Lowest singlet (RHF->RHF) stability eigenvalues")[1].split("Lowest triplet")[0]
values = [float(v) for v in re.findall(r"-?\d+\.\d+", block)]
json.dump({"energy": e, "lowest": min(values)}, open(sys.argv[2], "w"))
'''


def psi4_script(script, tag):
    """Run a psi4 script once (cached under build/testdata by its hash)."""
    key = hashlib.sha1(script.encode()).hexdigest()[:16]
    os.makedirs(molecules.CACHE, exist_ok=True)
    path = os.path.join(molecules.CACHE, "scf-ref-%s-%s.json" % (tag, key))
    if not os.path.exists(path):
        tmpdir = tempfile.mkdtemp(dir=molecules.CACHE)
        oj = os.path.join(tmpdir, "out.json")
        cmd, env = molecules.psi4_python()
        subprocess.run(cmd + ["-c", script, "-", oj], check=True, env=env, cwd=tmpdir,
                       stdout=subprocess.DEVNULL)
        os.replace(oj, path)
    with open(path) as f:
        return json.load(f)


def fcidump_lines(text):
    """Integral lines of an FCIDUMP body, without the constant."""
    lines = [ln.split() for ln in text.splitlines()]
    return [f for f in lines if len(f) == 5 and f[1].isdigit() and f[1:] != ["0"] * 4]


ref = psi4_script(PSI4_N2_COUNT, "n2count")
rc, ours, err = lam_scf("N 0 0 0\nN 0 0 1.0977")
if tap.ok(rc == 0, "N2 STO-3G: lam-scf FCIDUMP", err):
    body = fcidump_lines(ours)
    tap.ok(len(body) == ref["count"], "N2 STO-3G: %d non-zero unique integrals, as from psi4's "
           "%s orbitals (numpy)" % (ref["count"], ref["group"]), "lam-scf wrote %d" % len(body))
    tap.ok(min(abs(float(f[0])) for f in body) > 1e-8,
           "N2 STO-3G: no integral between 0 and 1e-8 Eh (symmetry zeros are exact)")
rc, noisy, err = lam_scf("N 0 0 0\nN 0 0 1.0977", "--cutoff", "0")
tap.ok(rc == 0 and len(fcidump_lines(noisy)) > 4 * ref["count"],
       "N2 STO-3G --cutoff 0: the noise is there without the cutoff (%d lines)"
       % len(fcidump_lines(noisy)))

# ---- stability: N2 at 1.9 A in cc-pVDZ
ref = psi4_script(PSI4_N2_STABILITY, "n2stability")
N2S = "N 0 0 0\nN 0 0 1.9"
rc, out, err = lam_scf(N2S, "--basis", "cc-pvdz", "--energy-only", "--stability", "check")
tap.ok(rc == 65, "N2 1.9 A cc-pVDZ --stability check: exit 65 (unstable)", err)
m = re.search(r"orbital Hessian has the eigenvalue (\S+) Eh", err)
tap.near(float(m.group(1)) if m else float("nan"), ref["lowest"], 1e-5,
         "N2 1.9 A: lowest orbital Hessian eigenvalue = psi4's RHF->RHF stability eigenvalue %.6f"
         % ref["lowest"])
followed = {}
for start in ("atoms", "core"):
    rc, out, err = lam_scf(N2S, "--basis", "cc-pvdz", "--energy-only", "--start", start)
    if not tap.ok(rc == 0, "N2 1.9 A --start %s: the instability is followed (exit 0)" % start, err):
        continue
    r = lamtest.report(out)
    followed[start] = r["scf_energy"]
    tap.ok(r["scf_energy"] < ref["energy"] - 1e-3,
           "N2 1.9 A --start %s: %.8f Eh, below psi4's saddle point %.8f" % (start, r["scf_energy"], ref["energy"]))
    tap.ok(r["stability_eigenvalue"] > -1e-6 and r["instabilities_followed"] >= 1,
           "N2 1.9 A --start %s: final solution stable (eigenvalue %.2e)" % (start, r["stability_eigenvalue"]))
if len(followed) == 2:
    tap.near(followed["atoms"], followed["core"], 1e-8, "N2 1.9 A: both starts end at the same stable solution")

# ---- stability: H2 at 20 A against the separated-atom closed form


def sto3g_hydrogen():
    """e_H and (AA|AA) of the STO-3G hydrogen 1s (zeta 1.24): closed-form
    integrals over normalized s Gaussians (common practice), contraction of
    Hehre, Stewart, Pople, J. Chem. Phys. 51, 2657 (1969)."""
    alpha = np.array([3.42525091, 0.62391373, 0.16885540])
    d = np.array([0.15432897, 0.53532814, 0.44463454])
    c = d * (2 * alpha / np.pi) ** 0.75
    a, b = np.meshgrid(alpha, alpha, indexing="ij")
    p = a + b
    s = (np.pi / p) ** 1.5
    t = a * b / p * 3 * s
    v = -2 * np.pi / p
    norm = c @ s @ c
    e_h = (c @ (t + v) @ c) / norm
    cc = np.outer(c, c)
    j = 0.0
    for i1 in range(3):
        for i2 in range(3):
            for i3 in range(3):
                for i4 in range(3):
                    pp, qq = alpha[i1] + alpha[i2], alpha[i3] + alpha[i4]
                    j += cc[i1, i2] * cc[i3, i4] * 2 * np.pi ** 2.5 / (pp * qq * np.sqrt(pp + qq))
    return e_h, j / norm ** 2


e_h, jaa = sto3g_hydrogen()
tap.near(e_h, -0.4666, 5e-5, "STO-3G H atom energy %.6f = Szabo-Ostlund -0.4666 Eh" % e_h)
tap.near(jaa, 0.7746, 5e-5, "STO-3G (AA|AA) %.6f = Szabo-Ostlund 0.7746 Eh" % jaa)
R = 20 / 0.52917721067
limit = 2 * e_h + jaa / 2 - 1 / (2 * R)
rc, out, err = lam_scf("H 0 0 0\nH 0 0 20", "--energy-only")
if tap.ok(rc == 0, "H2 at 20 A: exit 0", err):
    r = lamtest.report(out)
    tap.near(r["scf_energy"], limit, 1e-8, "H2 at 20 A: RHF energy = 2 e_H + (AA|AA)/2 - 1/(2R) = %.8f Eh" % limit)
    tap.ok(r["instabilities_followed"] == 1 and r["stability_eigenvalue"] > 0,
           "H2 at 20 A: the ionic saddle point was left (1 instability followed), the end is stable")
rc, out, err = lam_scf("H 0 0 0\nH 0 0 20", "--energy-only", "--stability", "off")
tap.near(lamtest.report(out).get("scf_energy"), 2 * e_h + jaa - 1 / R, 1e-8,
         "H2 at 20 A --stability off: the ionic saddle 2 e_H + (AA|AA) - 1/R (the iterations' end)")
rc, out, err = lam_scf("H 0 0 0\nH 0 0 10", "--energy-only")
tap.near(lamtest.report(out).get("scf_energy"), 2 * e_h + jaa / 2 - 1 / (2 * 10 / 0.52917721067), 1e-6,
         "H2 at 10 A: on the same curve (closed form to 1e-6 Eh)")

tap.done()
