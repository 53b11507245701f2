"""The committed workbook example-sheets/volunteer-survey-live.ods (written by
example-sheets/make_live_workbook.py) opened in a real headless LibreOffice with the built lode.oxt:
every formula on its "Live analysis" sheet evaluates without an error, each Lode formula's cells
equal the C library on the same answers (its Python binding, capi/python/lode) and, where the
definition is short, numpy/scipy; the loadings put each item on its intended factor as the demo's
generator built it (volunteer-survey-truth.json); the reliability section's scales are the items the
generator built for each factor, read from the sheet "Scale items" whose formulas reverse the
reverse-keyed items; and the workbook lists no function as missing that the extension now offers
(then it must be regenerated).

Run by ctest as office_live_workbook (tests/office/CMakeLists.txt). The file name keeps it out of
the cell-function run.
"""

import csv
import json
import os
import re
import shutil

import numpy as np
import pytest
import scipy.stats
import uno  # noqa: F401
from com.sun.star.beans import PropertyValue

import lode  # the C library through its Python binding

HERE = os.path.dirname(os.path.abspath(__file__))
SHEETS = os.path.join(HERE, "..", "..", "example-sheets")
WORKBOOK = os.path.join(SHEETS, "volunteer-survey-live.ods")
SHEET = "Live analysis"
KEYED = "Scale items"  # make_live_workbook.py's sheet of answers as the scales read them
SEED = 2026  # make_live_workbook.py's seed
TOL = 1e-12  # the cells hold the C library's doubles
# A Lode call as Calc's API gives it: by its programmatic name (ORG.LODE.CALC.CELLFUNCTIONS.KMO(...),
# lower case when Calc cannot resolve it), or by its display name LODE.KMO.
CALL = re.compile(r"^\{?=(?:LODE\.|org\.lode\.calc\.cellfunctions\.)([A-Za-z]+)\((.*)\)\}?$", re.IGNORECASE)


def function_of(formula):
    return "LODE." + CALL.match(formula).group(1).upper()


def answers():
    with open(os.path.join(SHEETS, "volunteer-survey-responses.csv"), newline="") as f:
        rows = list(csv.reader(f))
    return rows[0][1:], np.array([[float(v) if v != "" else np.nan for v in r[1:]] for r in rows[1:]])


def demo_truth():
    with open(os.path.join(SHEETS, "volunteer-survey-truth.json")) as f:
        return json.load(f)


def keyed_answers():
    """The answers as a scale reads them: reverse-keyed items (the generator's list) reversed on the
    five-point scale, (categories + 1) - answer."""
    names, x = answers()
    t = demo_truth()
    x = x.copy()
    for j, nm in enumerate(names):
        if nm in t["reverse_keyed"]:
            x[:, j] = len(t["categories"]) + 1 - x[:, j]
    return names, x


def column_index(letters):
    n = 0
    for ch in letters:
        n = n * 26 + ord(ch) - ord("A") + 1
    return n - 1


RANGE = re.compile(r"\$?'?([^'.]+?)'?\.\$?([A-Z]+)\$?(\d+):\$?([A-Z]+)\$?(\d+)")


@pytest.fixture(scope="module")
def keyed_header(office, book):
    """The item codes in the first row of the sheet KEYED, left to right."""
    sheet = book.Sheets.getByName(KEYED)
    with office.watchdog(60):
        row = sheet.getCellRangeByPosition(0, 0, 60, 0).getDataArray()[0]
    return [v for v in row if v != ""]


def scale_items(formula, keyed_header):
    """The item codes a Lode formula over the sheet KEYED reads (the columns of its range)."""
    m = RANGE.search(formula)
    assert m and m.group(1) == KEYED, formula
    return keyed_header[column_index(m.group(2)):column_index(m.group(4)) + 1]


@pytest.fixture(scope="module")
def functions(office):
    fd = office.smgr.createInstanceWithContext("com.sun.star.sheet.FunctionDescriptions", office.ctx)
    return {dict((p.Name, p.Value) for p in fd.getByIndex(i))["Name"] for i in range(fd.getCount())}


@pytest.fixture(scope="module")
def book(office):
    path = os.path.join(office.dir, "live.ods")
    shutil.copy(WORKBOOK, path)
    os.chmod(path, 0o666)
    with office.watchdog(120):
        doc = office.desktop.loadComponentFromURL(uno.systemPathToFileUrl(path), "_blank", 0,
                                                  (PropertyValue("Hidden", 0, True, 0),))
    with office.watchdog(600):
        doc.calculateAll()
    yield doc
    with office.watchdog(60):
        doc.close(True)


@pytest.fixture(scope="module")
def cells(office, book):
    """Every used cell of the analysis sheet: {(row, col): (formula, value)} with value a float, a
    str or ('error', code)."""
    sheet = book.Sheets.getByName(SHEET)
    cur = sheet.createCursor()
    cur.gotoStartOfUsedArea(False)
    cur.gotoEndOfUsedArea(True)
    a = cur.RangeAddress
    out = {}
    with office.watchdog(300):
        for r in range(a.EndRow + 1):
            for c in range(a.EndColumn + 1):
                cell = sheet.getCellByPosition(c, r)
                t = cell.Type.value
                if t == "EMPTY":
                    continue
                if cell.getError():
                    v = ("error", cell.getError())
                elif t == "TEXT" or (t == "FORMULA" and cell.FormulaResultType2 == 2):
                    v = cell.getString()
                else:
                    v = cell.getValue()
                out[(r, c)] = (cell.getFormula() if t == "FORMULA" else None, v)
    return out


@pytest.fixture(scope="module")
def blocks(cells):
    """Lode formulas: {formula text: ((top, left), matrix of values)}; an array formula's cells share
    its text."""
    groups = {}
    for (r, c), (f, v) in cells.items():
        if f and CALL.match(f):
            groups.setdefault(f, []).append((r, c, v))
    out = {}
    for f, members in groups.items():
        top, left = min(m[0] for m in members), min(m[1] for m in members)
        rows, cols = max(m[0] for m in members) - top + 1, max(m[1] for m in members) - left + 1
        m = [[None] * cols for _ in range(rows)]
        for r, c, v in members:
            m[r - top][c - left] = v
        out[f] = ((top, left), m)
    return out


def by_function(blocks, name):
    return [(f, pos, m) for f, (pos, m) in blocks.items() if function_of(f) == name]


def numbers(m):
    return np.array([[float(v) for v in row] for row in m])


def binding(name):
    fn = getattr(lode, name, None)
    if fn is None:
        pytest.fail(f"the Python binding has no lode.{name} to check the cells against")
    return fn


def test_every_formula_evaluates_without_error(cells):
    bad = {(r, c): (f, v) for (r, c), (f, v) in cells.items() if f and isinstance(v, tuple)}
    assert not bad, f"formulas with errors: {bad}"
    assert sum(1 for f, _ in cells.values() if f and CALL.match(f)) >= 3


def test_no_function_is_left_out_that_the_extension_offers(cells, functions):
    stale = sorted({m.group(1) for _, v in cells.values() if isinstance(v, str)
                    for m in [re.match(r"(LODE\.[A-Z]+) is not in this build", v)] if m and m.group(1) in functions})
    assert not stale, (f"{', '.join(stale)} now in the extension: regenerate the workbook with "
                       "example-sheets/make_live_workbook.py")


def test_formulas_read_the_responses_range(blocks):
    for f in blocks:
        if function_of(f) in ("LODE.ALPHA", "LODE.OMEGA"):
            assert f"$'{KEYED}'.$" in f, f  # the scales read the answers with reverse-keyed items reversed
        else:
            assert "$Responses.$" in f or function_of(f) == "LODE.VERSION", f


def test_scale_items_sheet_holds_the_keyed_answers(office, book, keyed_header):
    """Every cell of the sheet KEYED is a formula over the Responses sheet; its values are the answers
    with the reverse-keyed items reversed, empty where the answer is empty, items grouped by the
    factor the generator built them for."""
    names, x = keyed_answers()
    t = demo_truth()
    assert sorted(keyed_header) == sorted(names)
    order = [t["intended_factor"][nm] for nm in keyed_header]
    assert order == sorted(order, key=[f["code"] for f in t["factors"]].index)  # grouped by factor
    sheet = book.Sheets.getByName(KEYED)
    with office.watchdog(120):
        got = sheet.getCellRangeByPosition(0, 1, len(names) - 1, x.shape[0]).getDataArray()
        assert all(str(sheet.getCellByPosition(c, r).getFormula()).startswith("=")
                   for c in (0, len(names) - 1) for r in (0, 1, x.shape[0]))
    cells = np.array([[np.nan if v == "" else v for v in row] for row in got], dtype=float)
    expected = x[:, [names.index(nm) for nm in keyed_header]]
    assert np.array_equal(np.isnan(cells), np.isnan(expected))
    assert np.array_equal(cells[~np.isnan(expected)], expected[~np.isnan(expected)])


def test_the_answers_are_the_demo_data(office, book):
    names, x = answers()
    sheet = book.Sheets.getByName("Responses")
    with office.watchdog(120):
        got = sheet.getCellRangeByPosition(1, 0, len(names), x.shape[0]).getDataArray()
    assert list(got[0]) == names
    cells_x = np.array([[np.nan if v == "" else v for v in row] for row in got[1:]], dtype=float)
    assert np.array_equal(np.isnan(cells_x), np.isnan(x))
    assert np.array_equal(cells_x[~np.isnan(x)], x[~np.isnan(x)])


def test_against_the_c_library(blocks, keyed_header):
    names, x = answers()
    p = len(names)
    ref = lode.correlation(x, method="pearson", missing="pairwise", item_names=names)
    # numpy: the C library's matrix is the pairwise Pearson matrix (numpy.corrcoef per pair)
    for i, j in [(0, 1), (3, 17), (12, 29)]:
        ok = ~np.isnan(x[:, i]) & ~np.isnan(x[:, j])
        assert abs(ref.matrix[i, j] - np.corrcoef(x[ok, i], x[ok, j])[0, 1]) < 1e-12
    checked = set()

    for f, _, m in by_function(blocks, "LODE.VERSION"):
        assert m[0][0].startswith("Lode " + lode.version()["version"])
        checked.add("LODE.VERSION")
    for f, _, m in by_function(blocks, "LODE.EIGEN"):
        e = numbers(m)[:, 0]
        assert np.max(np.abs(e - ref.eigenvalues)) < TOL
        # numpy.linalg.eigvalsh of the same matrix
        assert np.max(np.abs(e - np.sort(np.linalg.eigvalsh(ref.matrix))[::-1])) < 1e-10
        checked.add("LODE.EIGEN")
    for f, _, m in by_function(blocks, "LODE.KMO"):
        # Kaiser (1970), Kaiser & Rice (1974): anti-image correlations from the inverse (numpy)
        q = np.linalg.inv(ref.matrix)
        a = -q / np.sqrt(np.outer(np.diag(q), np.diag(q)))
        off = ~np.eye(p, dtype=bool)
        r2, a2 = (ref.matrix[off] ** 2).sum(), (a[off] ** 2).sum()
        assert abs(m[0][0] - r2 / (r2 + a2)) < 1e-10
        assert abs(m[0][0] - binding("factorability")(x).kmo) < TOL
        checked.add("LODE.KMO")
    for f, _, m in by_function(blocks, "LODE.MSA"):
        # Kaiser (1970): per item, the same ratio over that item's row (numpy)
        q = np.linalg.inv(ref.matrix)
        a = -q / np.sqrt(np.outer(np.diag(q), np.diag(q)))
        off = ~np.eye(p, dtype=bool)
        r2, a2 = np.where(off, ref.matrix ** 2, 0).sum(axis=1), np.where(off, a ** 2, 0).sum(axis=1)
        msa = numbers(m)[:, 0]
        assert np.max(np.abs(msa - r2 / (r2 + a2))) < 1e-10
        assert np.max(np.abs(msa - binding("factorability")(x).msa)) < TOL
        checked.add("LODE.MSA")
    for f, _, m in by_function(blocks, "LODE.SPHERICITY"):
        chi2, df, pval = m[0]
        assert df == p * (p - 1) / 2  # Bartlett (1950): p(p-1)/2 degrees of freedom
        assert abs(pval - scipy.stats.chi2.sf(chi2, df)) < 1e-12  # scipy.stats.chi2
        b = binding("factorability")(x).bartlett
        assert abs(chi2 - b["chi_square"]) < 1e-9 * chi2
        checked.add("LODE.SPHERICITY")
    par = by_function(blocks, "LODE.PARALLEL")
    for f, _, m in par:
        cells = numbers(m)
        assert np.max(np.abs(cells[:, 0] - ref.eigenvalues)) < TOL
        # numpy.linalg.eigvalsh: the observed column
        assert np.max(np.abs(cells[:, 0] - np.sort(np.linalg.eigvalsh(ref.matrix))[::-1])) < 1e-10
        pa = binding("parallel_analysis")(x, replicates=500, percentile=95, seed=SEED)
        assert np.max(np.abs(cells[:, 1] - pa["random_pc_mean"])) < 1e-10
        assert np.max(np.abs(cells[:, 2] - pa["random_pc_percentile"])) < 1e-10
        assert np.all(cells[:, 2] >= cells[:, 1] - 1e-12)  # a 95th percentile lies above the mean
        checked.add("LODE.PARALLEL")
    k = None
    for f, _, m in by_function(blocks, "LODE.NFACTORS"):
        k = int(m[0][0])
        nf = binding("n_factors")(x, replicates=500, seed=SEED)  # the cells' replicates and seed
        # Horn (1965) on the reduced-matrix eigenvalues (the count rule of every surface): the leading run
        # of observed eigenvalues above the random percentile
        above = nf.parallel["observed_factor"] > nf.parallel["random_factor_percentile"]
        assert k == (int(np.argmin(above)) if not above.all() else len(above)) == nf.suggested
        # the generator built five factors (volunteer-survey-truth.json); parallel analysis finds them
        assert k == len(json.load(open(os.path.join(SHEETS, "volunteer-survey-truth.json")))["factors"])
        checked.add("LODE.NFACTORS")
    fit_fns = ["LODE.LOADINGS", "LODE.UNIQUENESS", "LODE.COMMUNALITY", "LODE.FIT"]
    if any(by_function(blocks, n) for n in fit_fns):
        loadings = by_function(blocks, "LODE.LOADINGS")
        kk = numbers(loadings[0][2]).shape[1] if loadings else k
        model = binding("fit")(x, factors=kk, method="minres", rotation="oblimin")
        for f, _, m in loadings:
            lo = numbers(m)
            assert np.max(np.abs(lo - model.loadings)) < 1e-9
            truth = json.load(open(os.path.join(SHEETS, "volunteer-survey-truth.json")))
            check_structure(lo, names, truth)
            checked.add("LODE.LOADINGS")
        for f, _, m in by_function(blocks, "LODE.UNIQUENESS"):
            assert np.max(np.abs(numbers(m)[:, 0] - model.uniquenesses)) < 1e-9
            checked.add("LODE.UNIQUENESS")
        for f, _, m in by_function(blocks, "LODE.COMMUNALITY"):
            assert np.max(np.abs(numbers(m)[:, 0] - model.communalities)) < 1e-9
            checked.add("LODE.COMMUNALITY")
        for f, _, m in by_function(blocks, "LODE.FIT"):
            labels = [row[0] for row in m]
            assert "error" not in labels, m
            values = {str(row[0]).lower(): row[1] for row in m}
            rmsea = [v for label, v in values.items() if label.startswith("rmsea") and isinstance(v, float)][0]
            assert abs(rmsea - model.statistics["rmsea"]) < 1e-9
            rmsr = [v for label, v in values.items() if "rmsr" in label or "root mean square residual" in label][0]
            assert abs(rmsr - model.statistics["rmsr"]) < 1e-9
            checked.add("LODE.FIT")
        for f, _, m in by_function(blocks, "LODE.SCORES"):
            s = numbers(m)
            ref_scores = binding("scores")(None, model, "regression")
            assert s.shape[1] == kk
            assert np.max(np.abs(s - ref_scores.values[:s.shape[0]])) < 1e-9
            # numpy: a volunteer who answered every item scores z W, z the answers standardised with each
            # item's mean and standard deviation over its answers
            z = (x - np.nanmean(x, axis=0)) / np.nanstd(x, axis=0, ddof=1)
            complete = [i for i in range(s.shape[0]) if not np.isnan(x[i]).any()]
            assert complete
            assert np.max(np.abs(s[complete] - z[complete] @ ref_scores.weights)) < 1e-9
            checked.add("LODE.SCORES")
    keyed_names, keyed = keyed_answers()
    t = demo_truth()
    for name in ["LODE.ALPHA", "LODE.OMEGA"]:
        scales = set()
        for f, _, m in by_function(blocks, name):
            items = scale_items(f, keyed_header)
            # the items the generator built for one factor, all of them
            codes = {t["intended_factor"][nm] for nm in items}
            assert len(codes) == 1, (f, items)
            assert set(items) == {nm for nm, c in t["intended_factor"].items() if c in codes}, (f, items)
            scales |= codes
            y = keyed[:, [keyed_names.index(nm) for nm in items]]
            if name == "LODE.ALPHA":
                cells = numbers(m)[0]
                a = binding("alpha")(y)
                assert np.max(np.abs(cells - [a.alpha, a.alpha_standardized, a.mean_inter_item_correlation,
                                              a.rows_used])) < TOL
                # Cronbach (1951) on the complete rows, numpy: k/(k-1) (1 - sum of item variances / variance
                # of the total); standardised: k rbar / (1 + (k-1) rbar)
                yc = y[~np.isnan(y).any(axis=1)]
                q = yc.shape[1]
                raw = q / (q - 1) * (1 - yc.var(axis=0, ddof=1).sum() / yc.sum(axis=1).var(ddof=1))
                rbar = np.corrcoef(yc, rowvar=False)[np.triu_indices(q, 1)].mean()
                assert abs(cells[0] - raw) < 1e-12 and abs(cells[2] - rbar) < 1e-12
                assert abs(cells[1] - q * rbar / (1 + (q - 1) * rbar)) < 1e-12 and cells[3] == yc.shape[0]
            else:
                o = binding("omega")(X=y, missing="pairwise")
                assert o.converged
                assert abs(m[0][0] - o.omega[0]) < TOL
                # McDonald (1999), numpy: (sum of loadings)^2 / ((sum of loadings)^2 + sum of uniquenesses)
                sl = o.loadings.sum()
                assert abs(m[0][0] - sl * sl / (sl * sl + o.uniquenesses.sum())) < 1e-12
            checked.add(name)
        if name in checked:  # one row per factor the generator built
            assert scales == {fac["code"] for fac in t["factors"]}, (name, scales)
    present = {function_of(f) for f in blocks}
    assert present == checked, f"unchecked: {present - checked}"
    assert {"LODE.VERSION", "LODE.EIGEN"} <= checked or {"LODE.VERSION", "LODE.PARALLEL"} <= checked, checked


def check_structure(lo, names, truth):
    """Each item's largest |loading| falls on the factor holding its section's other items, except the
    generator's designed weak and cross-loading items (volunteer-survey-truth.json)."""
    sections = [n[:3] for n in names]
    designed = set(truth["weak_items"]) | set(truth["cross_loading_items"])
    top = np.argmax(np.abs(lo), axis=1)
    for s in sorted(set(sections)):
        idx = [i for i, t in enumerate(sections) if t == s and names[i] not in designed]
        home = np.bincount(top[idx]).argmax()
        wrong = [names[i] for i in idx if top[i] != home]
        assert not wrong, f"{wrong} load elsewhere than the rest of {s}"
