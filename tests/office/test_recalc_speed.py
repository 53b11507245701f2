"""Recalculation of ten Lode formulas over 500 x 30 data in a real LibreOffice: measured and
reported (printed, and written to recalc-timing.txt in LODE_REPORT_DIR), never asserted: speed is
proven by benchmarks, not by timed tests. Checks only that the results are there."""

import os
import time

import numpy as np

ROWS, ITEMS, FACTORS = 500, 30, 3


def _simulated_survey():
    # Timing input only (no statistical check is made on it): a seeded three-factor model.
    rng = np.random.default_rng(6)
    lam = np.zeros((ITEMS, FACTORS))
    for j in range(ITEMS):
        lam[j, j % FACTORS] = 0.5 + 0.3 * rng.random()
    f = rng.normal(size=(ROWS, FACTORS))
    x = f @ lam.T + rng.normal(size=(ROWS, ITEMS)) * np.sqrt(1 - (lam ** 2).sum(axis=1))
    return np.round(3 + x, 0)  # Likert-like whole numbers


def _formulas(rng_ref):
    """The ten formulas, with the cells each fills (rows, cols)."""
    f = [
        (f"=LODE.CORR({rng_ref})", ITEMS, ITEMS),
        (f"=LODE.EIGEN({rng_ref})", ITEMS, 1),
        (f"=LODE.EIGEN({rng_ref};1)", ITEMS, 1),
        (f'=LODE.CORR({rng_ref};"spearman")', ITEMS, ITEMS),
    ]
    optional = [
        (f"=LODE.KMO({rng_ref})", 1, 1),
        (f'=LODE.LOADINGS({rng_ref};{FACTORS};"ml";"oblimin")', ITEMS, FACTORS),
        (f'=LODE.STRUCTURE({rng_ref};{FACTORS};"ml";"oblimin")', ITEMS, FACTORS),
        (f'=LODE.UNIQUENESS({rng_ref};{FACTORS};"ml";"oblimin")', ITEMS, 1),
        (f'=LODE.COMMUNALITY({rng_ref};{FACTORS};"ml";"oblimin")', ITEMS, 1),
        (f'=LODE.FACTORCORR({rng_ref};{FACTORS};"ml";"oblimin")', FACTORS, FACTORS),
        (f'=LODE.RESIDUALS({rng_ref};{FACTORS};"ml";"oblimin")', ITEMS, ITEMS),
        (f'=LODE.FIT({rng_ref};{FACTORS};"ml";"oblimin")', 9, 2),
        (f"=LODE.MSA({rng_ref})", ITEMS, 1),
        (f"=LODE.SPHERICITY({rng_ref})", 1, 3),
    ]
    return f, optional


def test_ten_formulas_over_500_by_30(office, book):
    fd = office.smgr.createInstanceWithContext("com.sun.star.sheet.FunctionDescriptions", office.ctx)
    available = {dict((p.Name, p.Value) for p in fd.getByIndex(i))["Name"] for i in range(fd.getCount())}
    x = _simulated_survey()
    rng_ref = book.put(x)
    base, optional = _formulas(rng_ref)
    formulas = [f for f in optional if f[0][1:].split("(")[0] in available] + base
    formulas = formulas[:10]
    sheet = book.out
    doc = book.doc
    placed = []
    left = 0
    t0 = time.monotonic()
    with office.watchdog(300):
        for formula, rows, cols in formulas:
            rng = sheet.getCellRangeByPosition(left, 0, left + cols - 1, rows - 1)
            rng.setArrayFormula(formula)
            placed.append((formula, left, rows, cols))
            left += cols + 1
    first = time.monotonic() - t0
    with office.watchdog(300):
        t0 = time.monotonic()
        doc.calculateAll()
        full = time.monotonic() - t0
        # an analyst corrects one response: every formula reading the range recalculates
        cell = book.data.getCellByPosition(4, 10)
        t0 = time.monotonic()
        cell.setValue(cell.getValue() + 1)
        first_result = sheet.getCellByPosition(0, 0).getValue()
        for _, left, _, _ in placed:  # reading a dirty formula cell makes Calc recompute it
            sheet.getCellByPosition(left, 0).getValue()
        edit = time.monotonic() - t0
    for formula, left, rows, cols in placed:
        c = sheet.getCellByPosition(left, 0)
        assert c.getError() == 0, f"{formula} failed with Err:{c.getError()}"
    assert np.isfinite(first_result)
    report = (f"{len(placed)} Lode formulas over {ROWS} x {ITEMS} data "
              f"({', '.join(f[0].split('(')[0][1:] for f in placed)}):\n"
              f"  entering them (first computation): {first:.3f} s\n"
              f"  calculateAll (hard recalculation, analyses cached): {full:.3f} s\n"
              f"  after one corrected response (recompute once, shared): {edit:.3f} s\n")
    print("\n" + report)
    out_dir = os.environ.get("LODE_REPORT_DIR")
    if out_dir:
        with open(os.path.join(out_dir, "recalc-timing.txt"), "w") as f:
            f.write(report)
