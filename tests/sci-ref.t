#!/usr/bin/python3
"""lam-range --bounds (selected CI) against references.

- Variational principle (common practice): a Rayleigh quotient is never
  below the lowest eigenvalue nor above the highest.  The exact extremes
  of a 10-orbital hydrogen chain come from lam-range's own determinant CI
  (full CI, certified by residuals); the inner half range must reach 99.9 %
  of the exact one with 10000 determinants a end (issue 14's goal).
- The same on stretched N2 (STO-3G, 2.0 angstrom, 10 orbitals, 14
  electrons, orbitals from lam-scf; our own geometry), 1000 determinants a
  end, as in lam-range(1)'s table.
- psi4 (Debian package): water in 6-31G with the oxygen 1s frozen (12
  orbitals, 8 electrons; our own geometry), psi4's FCIDUMP and psi4's own
  FCI energy of that active space: lam-range's full CI agrees with it, and
  the selected-CI bounds lie on the right side with the table's budget.
- psi4 (Debian package): the CISD energy of a 20-atom hydrogen chain in
  STO-3G from psi4's own orbitals, with psi4's FCIDUMP of the same
  orbitals as the input.  CISD is variational, and selected CI with enough
  determinants goes below it (Holmes, Tubman and Umrigar, J. Chem. Theory
  Comput. 12, 3674 (2016), from memory: heat-bath CI converges towards full
  CI from above).
"""
import json
import os
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "lib"))
import lamtest  # noqa: E402
import molecules  # noqa: E402

tap = lamtest.Tap()
# psi4 is the reference of the water and H20 parts only: without it they
# are skipped with the reason (a failure under LAM_REQUIRE_REFS=1), the
# lam-range-only parts still run.
HAVE_PSI4 = lamtest._importable("psi4")


def skip_without_psi4(what):
    if HAVE_PSI4:
        return False
    if os.environ.get("LAM_REQUIRE_REFS") == "1":
        tap.ok(False, "%s: independent reference psi4 missing" % what)
    else:
        tap.ok(True, "# skip %s: independent reference psi4 missing (Debian: make deps-test)" % what)
    return True
CACHE = os.path.join(lamtest.ROOT, "build", "testdata", "sci-v1")

PSI4_CISD = r'''
import json, sys
import psi4
n, r, fcidump_path, json_path = int(sys.argv[1]), float(sys.argv[2]), sys.argv[3], sys.argv[4]
psi4.set_output_file(json_path + ".out", False)
psi4.set_memory("1 GB")
geom = "\n".join("H 0 0 %.6f" % (i * r) for i in range(n))
psi4.geometry("0 1\n%s\nsymmetry c1\nno_reorient\nno_com\n" % geom)
psi4.set_options({"basis": "sto-3g", "scf_type": "pk", "e_convergence": 1e-10,
                  "d_convergence": 1e-8, "ci_maxiter": 60})
e_scf, wfn = psi4.energy("scf", return_wfn=True)
from psi4.driver.p4util.fcidump import fcidump
fcidump(wfn, fcidump_path)
e_cisd = psi4.energy("cisd")
json.dump({"scf": e_scf, "cisd": e_cisd, "nmo": wfn.nmo()}, open(json_path, "w"))
'''


def psi4_chain(n, r):
    """(fcidump path, {"scf", "cisd", "nmo"}) of an n-atom chain, cached."""
    os.makedirs(CACHE, exist_ok=True)
    base = os.path.join(CACHE, "h%d-%.2f" % (n, r))
    if not (os.path.exists(base + ".fcidump") and os.path.exists(base + ".json")):
        tmp = tempfile.mkdtemp(dir=CACHE)
        tf, tj = os.path.join(tmp, "f"), os.path.join(tmp, "j")
        cmd, env = molecules.psi4_python()
        subprocess.run(cmd + ["-c", PSI4_CISD, str(n), str(r), tf, tj], check=True, env=env,
                       cwd=tmp, stdout=subprocess.DEVNULL)
        os.replace(tf, base + ".fcidump")
        os.replace(tj, base + ".json")
    with open(base + ".json") as f:
        return base + ".fcidump", json.load(f)


def lam_range(op, *args):
    rc, out, err = lamtest.run("lam-range", ["--quiet"] + list(args), stdin=op)
    if not tap.ok(rc == 0, "lam-range %s ran" % " ".join(args), err):
        return {}
    return lamtest.report(out)


def num(rep, key):
    try:
        return float(rep[key])
    except (KeyError, ValueError):
        return None


# ---- 10 orbitals: bounds on the right side of full CI, close to it ----
# The chain of lam-range(1)'s table (H-H 1.2 angstrom, STO-3G, orbitals
# from lam-scf); budgets of 2000 and 10000 determinants a end.
xyz = "10\nH10 chain\n" + "".join("H 0 0 %.1f\n" % (1.2 * i) for i in range(10))
op = lamtest.pipe(("lam-scf", []), ("lam-ints", []), stdin=xyz)
exact = lam_range(op, "--sector", "5,5")
emin, emax = num(exact, "sector_min"), num(exact, "sector_max")
tap.ok(exact.get("status") == "exact", "H10 (5,5): full CI certified")
# measured: ratio 0.99822 at 2000, 0.99980 at 10000 of 63504 determinants
for budget, floor in ((2000, 0.998), (10000, 0.999)):
    bound = lam_range(op, "--sector", "5,5", "--bounds=always", "--bound-subspace", str(budget))
    bmin, bmax = num(bound, "sector_min"), num(bound, "sector_max")
    tap.ok(bound.get("status") == "bound", "H10 budget %d: --bounds says status bound" % budget)
    if None in (emin, emax, bmin, bmax):
        tap.ok(False, "H10 budget %d: values present" % budget, repr((exact, bound)))
        continue
    tap.ok(bmin >= emin - 1e-10, "H10 budget %d: lowest bound %.8f >= full CI %.8f" % (budget, bmin, emin))
    tap.ok(bmax <= emax + 1e-10, "H10 budget %d: highest bound %.8f <= full CI %.8f" % (budget, bmax, emax))
    ratio = (bmax - bmin) / (emax - emin)
    tap.ok(ratio >= floor, "H10 budget %d: inner half range %.5f of full CI (at least %g)" % (budget, ratio, floor))
    # the highest end in localized orbitals reaches full CI itself
    tap.near(bmax, emax, 1e-7, "H10 budget %d: highest within 1e-7 Eh of full CI" % budget)
    if budget == 10000:
        tap.near(bmin, emin, 3e-3, "H10 lowest within 3 mEh of full CI")
        est = num(bound, "sci.estimate_min")
        tap.ok(est is not None and abs(est - emin) < abs(bmin - emin) + 1e-6,
               "H10: the second-order estimate is closer to full CI than the bound")


def check_bounds(name, op, sector, budget, emin, emax, min_ratio, tol=1e-10):
    """Bounds of one budget: on the right side of the exact extremes, and
    the inner half range at least min_ratio of the exact one."""
    bound = lam_range(op, "--sector", sector, "--bounds=always", "--bound-subspace", str(budget))
    bmin, bmax = num(bound, "sector_min"), num(bound, "sector_max")
    if None in (emin, emax, bmin, bmax):
        tap.ok(False, "%s budget %d: values present" % (name, budget), repr(bound))
        return
    tap.ok(bound.get("sector_min_status") == "bound" and bound.get("sector_max_status") == "bound",
           "%s budget %d: status bound at both ends" % (name, budget))
    tap.ok(bmin >= emin - tol, "%s budget %d: lowest bound %.8f >= full CI %.8f" % (name, budget, bmin, emin))
    tap.ok(bmax <= emax + tol, "%s budget %d: highest bound %.8f <= full CI %.8f" % (name, budget, bmax, emax))
    ratio = (bmax - bmin) / (emax - emin)
    tap.ok(ratio >= min_ratio, "%s budget %d: inner half range %.5f of full CI (at least %g)"
           % (name, budget, ratio, min_ratio))


# ---- stretched N2: 10 orbitals, sector (7,7) of 14400 determinants ----
# measured (lam-range(1)'s table): ratio 0.99996 with 1000 determinants a end
n2 = "2\nN2 2.0 A\nN 0 0 0\nN 0 0 2.0\n"
op = lamtest.pipe(("lam-scf", []), ("lam-ints", []), stdin=n2)
exact = lam_range(op, "--sector", "7,7", "--check-steps", "1000")
tap.ok(exact.get("sector_max_status") == "exact", "N2 2.0 A (7,7): the highest state certified")
check_bounds("N2 2.0 A", op, "7,7", 1000, num(exact, "sector_min"), num(exact, "sector_max"), 0.999)

# ---- water 6-31G, oxygen 1s frozen: 12 orbitals, sector (4,4) ----
# The name and geometry of bench/sci-table.sh (they share psi4's cache).
if not skip_without_psi4("water 6-31G active space"):
    molecules.MOLECULES["h2o-631g"] = (
        "O 0 0 0\nH 0 0.7700 0.5900\nH 0 -0.7700 0.5900", 0, "6-31g", True)
    fcid, ref = molecules.reference("h2o-631g")
    tap.ok(ref["nmo"] - ref["frozen"] == 12, "water 6-31G: 12 active orbitals (%d, %d frozen)"
           % (ref["nmo"], ref["frozen"]))
    op = lamtest.pipe(("lam-ints", [fcid]))
    exact = lam_range(op, "--sector", "4,4")
    emin, emax = num(exact, "sector_min"), num(exact, "sector_max")
    tap.ok(exact.get("status") == "exact", "water (4,4): full CI certified at both ends")
    # psi4 FCI of the same active space: an independent lowest eigenvalue
    tap.near(emin, ref["fci"], 1e-7, "water: lam-range full CI = psi4 FCI %.8f" % ref["fci"])
    # measured: ratio 0.99361 with 20000 determinants a end (0.1 % needs
    # more: see lam-range(1))
    check_bounds("water", op, "4,4", 20000, emin, emax, 0.993)

# ---- 20 orbitals: at or below psi4's CISD of the same orbitals ----
if skip_without_psi4("H20 against CISD"):
    tap.done()
fcid, ref = psi4_chain(20, 1.0)
op20 = lamtest.pipe(("lam-ints", [fcid]))
sci = lam_range(op20, "--sector", "10,10", "--lowest", "--bounds=always", "--bound-subspace", "20000")
low = num(sci, "sector_min")
tap.ok(low is not None and low <= ref["cisd"],
       "H20 STO-3G: selected CI %r at or below psi4 CISD %.8f" % (low, ref["cisd"]))
tap.ok(low is not None and low >= ref["cisd"] - 0.1,
       "H20: and within 0.1 Eh of it (a sanity window)")
tap.done()
