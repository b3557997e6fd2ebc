"""Test molecules of our own scenario, and psi4 references for them.

psi4 (Debian package) is an independent reference: it writes the FCIDUMP
and computes HF and FCI energies.  Files are cached under build/testdata so
that the suite runs psi4 once per molecule; writes are atomic so that tests
running in parallel can share the cache.

Geometries in angstrom, chosen for this project (not taken from elsewhere).
"""
import json
import os
import subprocess
import sys
import tempfile

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
# The cache name carries a version: bump it when PSI4_SCRIPT changes.
CACHE = os.path.join(ROOT, "build", "testdata", "v2")

# name: (geometry, charge, basis, freeze_core)
MOLECULES = {
    "h2": ("H 0 0 0\nH 0 0 0.7414", 0, "sto-3g", False),
    "h3plus": ("H 0 0 0\nH 0.87 0 0\nH 0.435 0.7534 0", 1, "sto-3g", False),
    "h4chain": ("H 0 0 0\nH 0 0 0.9\nH 0 0 1.8\nH 0 0 2.7", 0, "sto-3g", False),
    "lih": ("Li 0 0 0\nH 0 0 1.56", 0, "sto-3g", True),
    "hf": ("F 0 0 0\nH 0 0 0.93", 0, "sto-3g", True),
    "h2o": ("O 0 0 0.1166\nH 0 0.7621 -0.4664\nH 0 -0.7621 -0.4664", 0, "sto-3g", True),
    "beh2": ("Be 0 0 0\nH 0 0 1.33\nH 0 0 -1.33", 0, "sto-3g", True),
}

PSI4_SCRIPT = r'''
import json, sys
import numpy as np
import psi4
name, geom, charge, basis, fc, fcidump_path, json_path = sys.argv[1:8]
psi4.set_output_file(json_path + ".out", False)
psi4.set_memory("2 GB")
psi4.geometry("%d 1\n%s\nsymmetry c1\nno_reorient\nno_com\n" % (int(charge), geom))
psi4.set_options({"basis": basis, "scf_type": "pk", "e_convergence": 1e-12,
                  "d_convergence": 1e-10, "freeze_core": fc == "1"})
e_scf, wfn = psi4.energy("scf", return_wfn=True)
nfrozen = int(wfn.frzcpi().sum())
if nfrozen == 0:
    # psi4's own writer: the file format of a real FCIDUMP writer.
    from psi4.driver.p4util.fcidump import fcidump
    fcidump(wfn, fcidump_path)
else:
    # Debian's psi4 fcidump() drops one-body integrals of the last active
    # orbitals when orbitals are frozen (it slices the active block with
    # the active count as end index), so frozen-core files are written
    # here from psi4's AO integrals and orbitals instead.
    C = wfn.Ca().to_array()
    mints = psi4.core.MintsHelper(wfn.basisset())
    eri = mints.ao_eri().to_array()
    hcore = mints.ao_kinetic().to_array() + mints.ao_potential().to_array()
    Cc, Ca = C[:, :nfrozen], C[:, nfrozen:]
    Dc = Cc @ Cc.T
    J = np.einsum("pqrs,rs->pq", eri, Dc)
    K = np.einsum("prqs,rs->pq", eri, Dc)
    fcore = hcore + 2 * J - K
    e_core = float(np.sum((hcore + fcore) * Dc)) + wfn.molecule().nuclear_repulsion_energy()
    h = Ca.T @ fcore @ Ca
    g = np.einsum("pqrs,pi,qj,rk,sl->ijkl", eri, Ca, Ca, Ca, Ca, optimize=True)
    n = Ca.shape[1]
    nelec = wfn.nalpha() + wfn.nbeta() - 2 * nfrozen
    with open(fcidump_path, "w") as f:
        f.write("&FCI\nNORB=%d,\nNELEC=%d,\nMS2=0,\nORBSYM=%s\nISYM=1,\n&END\n" % (n, nelec, "1," * n))
        for i in range(n):
            for j in range(i + 1):
                for k in range(n):
                    for l in range(k + 1):
                        if i * (i + 1) // 2 + j >= k * (k + 1) // 2 + l and abs(g[i, j, k, l]) > 1e-14:
                            f.write("%28.20E %4d %4d %4d %4d\n" % (g[i, j, k, l], i + 1, j + 1, k + 1, l + 1))
        for i in range(n):
            for j in range(i + 1):
                if abs(h[i, j]) > 1e-14:
                    f.write("%28.20E %4d %4d %4d %4d\n" % (h[i, j], i + 1, j + 1, 0, 0))
        f.write("%28.20E %4d %4d %4d %4d\n" % (e_core, 0, 0, 0, 0))
e_fci = psi4.energy("fci")
json.dump({"scf": e_scf, "fci": e_fci, "nmo": wfn.nmo(), "frozen": nfrozen},
          open(json_path, "w"))
'''


def psi4_python():
    """Command prefix that runs Debian's psi4 module."""
    env = dict(os.environ)
    env["PYTHONPATH"] = "/usr/lib/x86_64-linux-gnu"
    env.setdefault("OMP_NUM_THREADS", "1")
    return ["/usr/bin/python3"], env


def reference(name):
    """(fcidump path, {"scf", "fci", "nmo", "frozen"}) for a test molecule."""
    geom, charge, basis, fc = MOLECULES[name]
    os.makedirs(CACHE, exist_ok=True)
    fcid = os.path.join(CACHE, name + ".fcidump")
    js = os.path.join(CACHE, name + ".json")
    if not (os.path.exists(fcid) and os.path.exists(js)):
        tmpdir = tempfile.mkdtemp(dir=CACHE)
        tf, tj = os.path.join(tmpdir, "f"), os.path.join(tmpdir, "j")
        cmd, env = psi4_python()
        subprocess.run(cmd + ["-c", PSI4_SCRIPT, name, geom, str(charge), basis,
                              "1" if fc else "0", tf, tj],
                       check=True, env=env, cwd=tmpdir,
                       stdout=subprocess.DEVNULL)
        os.replace(tf, fcid)
        os.replace(tj, js)
    with open(js) as f:
        return fcid, json.load(f)


if __name__ == "__main__":
    for n in sys.argv[1:] or MOLECULES:
        path, e = reference(n)
        print(n, path, e)
