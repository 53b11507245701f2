"""Every Lode cell function entered as a formula in a real LibreOffice, its cells checked against
the C library on the same data (its Python binding, capi/python/lode) and against an outside reference run live
(named beside each check).

Data: R's 'datasets' package (open data shipped by Debian's r-base-core): attitude (Chatterjee and
Price 1977; 30 x 7), USJudgeRatings (43 x 12) and Harman74.cor (Harman 1976; 24 tests, n = 145).
"""

import numpy as np
import pytest
import scipy.stats

import lode  # the C library through its Python binding (capi/python)
from refs import max_diff_up_to_sign, r_dataset, run_r

TOL = 1e-9  # the cells hold the C library's doubles; only the transfer through Calc is in between


@pytest.fixture(scope="module")
def attitude():
    return r_dataset("attitude")


@pytest.fixture(scope="module")
def attitude_with_gaps(attitude):
    """attitude with some answers deleted (a fixed pattern), to exercise pairwise deletion."""
    names, x = attitude
    x = x.copy()
    for i, j in [(0, 0), (3, 2), (7, 5), (11, 1), (19, 6), (24, 3), (28, 4)]:
        x[i, j] = np.nan
    return names, x


def test_function_wizard_lists_every_function_with_descriptions(office):
    """The table drives the Function Wizard: every LODE function has a description and help for
    every argument, filed in Calc's add-in category."""
    fd = office.smgr.createInstanceWithContext("com.sun.star.sheet.FunctionDescriptions", office.ctx)
    found = {}
    for i in range(fd.getCount()):
        props = {p.Name: p.Value for p in fd.getByIndex(i)}
        if props["Name"].startswith("LODE."):
            found[props["Name"]] = props
    for name in ["LODE.VERSION", "LODE.CORR", "LODE.EIGEN"]:
        assert name in found, f"{name} missing from the Function Wizard"
    for name, p in found.items():
        assert len(p["Description"]) > 20, name
        assert p["Category"] == 11, name  # ID_FUNCTION_GRP_ADDINS: Calc's "Add-In" category
        for arg in p["Arguments"] or ():
            assert arg.Name and len(arg.Description) > 10, (name, arg.Name)


def test_version(book):
    v = book.value("=LODE.VERSION()")
    assert isinstance(v, str) and v.startswith("Lode ") and "C ABI 2." in v


def test_corr_pearson_matches_numpy_and_c(book, attitude):
    names, x = attitude
    rng = book.put(x, names)
    p = x.shape[1]
    cells = book.numbers(f"=LODE.CORR({rng})", p, p)
    # numpy.corrcoef (complete data)
    assert np.max(np.abs(cells - np.corrcoef(x, rowvar=False))) < 1e-12
    assert np.max(np.abs(cells - lode.correlation(x).matrix)) < TOL


def test_corr_spearman_matches_scipy(book, attitude):
    names, x = attitude
    rng = book.put(x, names)
    p = x.shape[1]
    cells = book.numbers(f'=LODE.CORR({rng};"spearman")', p, p)
    # scipy.stats.spearmanr (average ranks for ties)
    assert np.max(np.abs(cells - scipy.stats.spearmanr(x).correlation)) < 1e-12


def test_corr_missing_pairwise_and_listwise_match_r(book, attitude_with_gaps):
    names, x = attitude_with_gaps
    rng = book.put(x, names)
    p = x.shape[1]
    pairwise = book.numbers(f'=LODE.CORR({rng};"pearson";"pairwise")', p, p)
    listwise = book.numbers(f'=LODE.CORR({rng};;"listwise")', p, p)
    # R stats::cor with use = "pairwise.complete.obs" / "complete.obs"
    ref = run_r('emit("pw", cor(X, use = "pairwise.complete.obs")); emit("lw", cor(X, use = "complete.obs"))',
                {"X": x})
    assert np.max(np.abs(pairwise - ref["pw"])) < 1e-12
    assert np.max(np.abs(listwise - ref["lw"])) < 1e-12
    c = lode.correlation(x, missing="listwise").matrix
    assert np.max(np.abs(listwise - c)) < TOL


def test_eigen_matches_numpy(book, attitude):
    names, x = attitude
    rng = book.put(x, names)
    p = x.shape[1]
    cells = book.numbers(f"=LODE.EIGEN({rng})", p, 1)[:, 0]
    r = np.corrcoef(x, rowvar=False)
    # numpy.linalg.eigvalsh, largest first
    assert np.max(np.abs(cells - np.sort(np.linalg.eigvalsh(r))[::-1])) < 1e-10
    reduced = book.numbers(f"=LODE.EIGEN({rng};1)", p, 1)[:, 0]
    smc = 1 - 1 / np.diag(np.linalg.inv(r))
    r2 = r.copy()
    np.fill_diagonal(r2, smc)
    # reduced matrix: squared multiple correlations on the diagonal (numpy, from the definition)
    assert np.max(np.abs(reduced - np.sort(np.linalg.eigvalsh(r2))[::-1])) < 1e-10


def test_correlation_matrix_input_is_recognised(book):
    """A square symmetric range with a unit diagonal is read as a correlation matrix: its
    eigenvalues are those of the matrix itself, not of a correlation of its columns."""
    out = run_r('emit("R", Harman74.cor$cov)')
    r = out["R"]
    rng = book.put(r)
    p = r.shape[0]
    cells = book.numbers(f"=LODE.EIGEN({rng})", p, 1)[:, 0]
    # numpy.linalg.eigvalsh on Harman (1976)'s 24 psychological tests (R datasets::Harman74.cor)
    assert np.max(np.abs(cells - np.sort(np.linalg.eigvalsh(r))[::-1])) < 1e-10


def test_formulas_survive_save_and_reload(office, book, attitude, tmp_path):
    """A saved .ods stores the functions by their programmatic names; reloading recomputes them."""
    import uno
    from com.sun.star.beans import PropertyValue

    names, x = attitude
    rng = book.put(x, names)
    p = x.shape[1]
    before = book.numbers(f"=LODE.CORR({rng})", p, p)
    url = uno.systemPathToFileUrl(str(tmp_path / "saved.ods"))
    with office.watchdog(60):
        book.doc.storeToURL(url, ())
        hidden = PropertyValue()
        hidden.Name, hidden.Value = "Hidden", True
        doc = office.desktop.loadComponentFromURL(url, "_blank", 0, (hidden,))
    try:
        with office.watchdog(60):
            doc.calculateAll()
            out = doc.Sheets.getByName("Out")
            top = book.next_row - p - 1
            cell = out.getCellByPosition(0, top)
            assert "LODE.CORR(" in cell.FormulaLocal.upper()  # what the user sees after reloading
            after = np.array([[out.getCellByPosition(j, top + i).getValue() for j in range(p)] for i in range(p)])
        assert np.max(np.abs(after - before)) == 0.0
    finally:
        with office.watchdog(60):
            doc.close(True)


def test_corr_polychoric_matches_polycor_and_c(book, attitude):
    """Ordinal items: attitude's ratings cut at their quartiles into four ordered categories."""
    names, x = attitude
    cuts = np.percentile(x, [25, 50, 75], axis=0)
    ordinal = np.array([[1 + np.searchsorted(cuts[:, j], x[i, j], side="right") for j in range(x.shape[1])]
                        for i in range(x.shape[0])], dtype=float)
    rng = book.put(ordinal, names)
    p = x.shape[1]
    cells = book.numbers(f'=LODE.CORR({rng};"polychoric")', p, p)
    assert np.max(np.abs(cells - lode.correlation(ordinal, method="polychoric").matrix)) < TOL
    # r-cran-polycor: polycor::polychor, two-step estimate (Olsson 1979), pair by pair
    ref = run_r("""
      library(polycor)
      p <- ncol(X); R <- diag(p)
      for (i in 1:(p - 1)) for (j in (i + 1):p) R[i, j] <- R[j, i] <- polychor(X[, i], X[, j])
      emit("R", R)
    """, {"X": ordinal})
    assert np.max(np.abs(cells - ref["R"])) < 1e-3
