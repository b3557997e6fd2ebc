"""Write an FCIDUMP of one of our example molecules with psi4 (Debian package).

Run from examples/ (the Makefile does not run it: its output is kept in
data/ so that the demo needs no psi4):

    PYTHONPATH=/usr/lib/x86_64-linux-gnu /usr/bin/python3 recipes/make-fcidump.py water data/water.fcidump

psi4 computes restricted Hartree-Fock in STO-3G (Hehre, Stewart and Pople,
J. Chem. Phys. 51, 2657 (1969)) with the oxygen 1s orbital frozen, and its
fcidump() writes the active-space integrals; HF and FCI energies are
printed for the record.
"""
import os
import sys
import tempfile

import psi4

# Our own scenario: a water molecule with O-H 1.00 angstrom and H-O-H 105
# degrees, and lithium hydride at 1.60 angstrom.  Z-matrix input, angstrom.
MOLECULES = {
    "water": ("O\nH 1 1.00\nH 1 1.00 2 105.0", True),
    "lih": ("Li\nH 1 1.60", True),
}


def main(name, path):
    geom, frozen = MOLECULES[name]
    path = os.path.abspath(path)
    os.chdir(tempfile.mkdtemp())  # psi4 leaves scratch files in the working directory
    psi4.core.be_quiet()
    psi4.set_memory("1 GB")
    psi4.geometry("0 1\n%s\nsymmetry c1\n" % geom)
    psi4.set_options({"basis": "sto-3g", "scf_type": "pk", "e_convergence": 1e-12,
                      "d_convergence": 1e-10, "freeze_core": frozen})
    e_scf, wfn = psi4.energy("scf", return_wfn=True)
    from psi4.driver.p4util.fcidump import fcidump
    fcidump(wfn, path)
    e_fci = psi4.energy("fci")
    print("%s: E_HF = %.10f Eh, E_FCI = %.10f Eh, %d orbitals, %d frozen"
          % (name, e_scf, e_fci, wfn.nmo(), wfn.frzcpi().sum()))


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
