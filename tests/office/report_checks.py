"""The analysis report service (org.lode.calc.AnalysisReport, the work behind the dialog) called on
the demo workbook in a real headless LibreOffice; every report sheet's cells are checked against
the C library on the same data (its Python binding, capi/python/lode), the eigenvalues and the
listwise matrix also against numpy. Checked too: nothing outside the new sheets changes, a second
run does not overwrite the first, a cancelled or failed run leaves the workbook as it was, the menu
and toolbar entries are registered.

Run by ctest as office_report (tests/office/CMakeLists.txt), which sets URE_MORE_TYPES so that
this Python knows the service's interface. The file name keeps it out of the cell-function run.
"""

import csv
import os
import shutil
import struct
import time

import numpy as np
import pytest
import uno  # noqa: F401  (its local context has read URE_MORE_TYPES by now)

# URE_MORE_TYPES is for this Python only (it must know the service's interface). soffice must not
# inherit it: it would replace the office's own list, which brings in the installed extensions' types.
os.environ.pop("URE_MORE_TYPES", None)
from com.sun.star.beans import PropertyValue
from com.sun.star.lang import IllegalArgumentException

import lode  # the C library through its Python binding

HERE = os.path.dirname(os.path.abspath(__file__))
SHEETS = os.path.join(HERE, "..", "..", "example-sheets")
# The demo's suggested solution is oblique with 5 factors, so the report includes the general factor.
REPORT_SHEETS = ["Lode overview", "Lode loadings", "Lode factors", "Lode scree", "Lode general factor",
                 "Lode run record"]
TOL = 1e-12  # the cells hold the C library's doubles


def props(**kw):
    out = []
    for k, v in kw.items():
        p = PropertyValue()
        p.Name = k
        p.Value = uno.Any("[]string", tuple(v)) if isinstance(v, (list, tuple)) else v
        out.append(p)
    return tuple(out)


def survey_values():
    """The demo responses from the CSV the workbook was made from: item names and values (NaN = empty)."""
    with open(os.path.join(SHEETS, "volunteer-survey-responses.csv"), newline="") as f:
        rows = list(csv.reader(f))
    names = rows[0][1:]
    x = np.array([[float(v) if v != "" else np.nan for v in r[1:]] for r in rows[1:]])
    return names, x


def fnv1a64(x, names):
    """The run record's hash as report_model.hpp defines it, recomputed independently here."""
    h = 0xcbf29ce484222325
    data = bytearray()
    for v in x.reshape(-1):
        data += struct.pack("<Q", 0x7ff8000000000000) if np.isnan(v) else struct.pack("<d", v)
    for n in names:
        data += n.encode() + b"\0"
    for b in data:
        h ^= b
        h = (h * 0x100000001b3) & 0xFFFFFFFFFFFFFFFF
    return f"{h:016x}"


def sheet_names(doc):
    return list(doc.Sheets.ElementNames)


def used_block(sheet):
    """The used area of a sheet as formulas (text, numbers and formulas alike) and its address."""
    cur = sheet.createCursor()
    cur.gotoStartOfUsedArea(False)
    cur.gotoEndOfUsedArea(True)
    a = cur.RangeAddress
    return (a.StartColumn, a.StartRow, a.EndColumn, a.EndRow), cur.getFormulaArray()


def snapshot(doc):
    return {n: used_block(doc.Sheets.getByName(n)) for n in sheet_names(doc)}


def cell_styles(doc):
    return set(doc.StyleFamilies.getByName("CellStyles").ElementNames)


def read_sheet(sheet):
    """Every used cell: a list of rows of values (float, str or None for empty)."""
    (c0, r0, c1, r1), _ = used_block(sheet)
    out = []
    for r in range(0, r1 + 1):
        row = []
        for c in range(0, c1 + 1):
            cell = sheet.getCellByPosition(c, r)
            t = cell.Type.value
            row.append(None if t == "EMPTY" else cell.String if t == "TEXT" else cell.Value)
        out.append(row)
    return out


# The loadings table's columns between the item and its loadings.
LD_LEAD = ["Belongs to", "Explained by the factors (communality)", "Left to the item (uniqueness)"]


def find_row(rows, label):
    hits = [r for r in rows if r and r[0] == label]
    assert len(hits) == 1, f"{label!r} found {len(hits)} times"
    return hits[0]


@pytest.fixture(scope="module")
def service(office):
    s = office.smgr.createInstanceWithContext("org.lode.calc.AnalysisReport", office.ctx)
    assert s is not None, "the extension does not provide org.lode.calc.AnalysisReport"
    return s


@pytest.fixture(scope="module")
def survey(office):
    path = os.path.join(office.dir, "survey.ods")
    shutil.copy(os.path.join(SHEETS, "volunteer-survey.ods"), path)
    os.chmod(path, 0o666)
    with office.watchdog(60):
        doc = office.desktop.loadComponentFromURL(uno.systemPathToFileUrl(path), "_blank", 0,
                                                  (PropertyValue("Hidden", 0, True, 0),))
    yield doc
    with office.watchdog(60):
        doc.close(True)


def source(doc):
    (c0, r0, c1, r1), _ = used_block(doc.Sheets.getByName("Responses"))
    a = uno.createUnoStruct("com.sun.star.table.CellRangeAddress")
    a.Sheet = sheet_names(doc).index("Responses")
    a.StartColumn, a.StartRow, a.EndColumn, a.EndRow = c0, r0, c1, r1
    return a


def test_describe_columns_detects_the_header_and_the_text_column(survey, service):
    names, _ = survey_values()
    cols = service.describeColumns(survey, source(survey), -1)
    assert cols[0] == "header"
    assert cols[1] == "-respondent"  # identifiers are text: not offered as an item
    assert list(cols[2:]) == ["+" + n for n in names]
    forced = service.describeColumns(survey, source(survey), 0)
    assert forced[0] == "no header" and forced[1] == "-column A" and forced[2] == "+column B"


def test_report_matches_the_c_library_and_touches_nothing_else(office, survey, service):
    names, x = survey_values()
    before = snapshot(survey)
    styles_before = cell_styles(survey)
    with office.watchdog(300):
        said = service.run(survey, source(survey), props(Correlation="pearson", Missing="pairwise", Seed=4242,
                                                         Salient=0.35, Factors=0, Extraction="minres"))
    after_names = sheet_names(survey)
    new = [n for n in after_names if n not in before]
    assert new == REPORT_SHEETS, new
    for n in REPORT_SHEETS:
        assert n in said, said  # the caller is told where the report went
    for n, block in before.items():  # nothing outside the new sheets changed
        assert used_block(survey.Sheets.getByName(n)) == block, f"sheet {n} changed"
    assert styles_before <= cell_styles(survey)

    # The reference: the C library on the same values (the CSV the workbook was made from).
    ref = lode.correlation(x, method="pearson", missing="pairwise", item_names=names)
    p = len(names)

    ov = read_sheet(survey.Sheets.getByName("Lode overview"))
    for s in REPORT_SHEETS:
        assert [s] in [r[:1] for r in ov], f"the overview does not list {s}"
    assert find_row(ov, "Source range")[1] == "$Responses.$A$1:$AE$421"
    assert find_row(ov, "First row holds item names")[1] == "yes"
    assert find_row(ov, "Items analysed")[1] == p
    assert find_row(ov, "Respondents in the range")[1] == ref.rows_total == x.shape[0]
    assert find_row(ov, "Respondents used")[1] == ref.rows_used
    assert find_row(ov, "Respondents who answered every item")[1] == ref.rows_complete
    # numpy: complete rows counted directly
    assert ref.rows_complete == int(np.sum(~np.isnan(x).any(axis=1)))
    assert find_row(ov, "Sample size for tests")[1] == ref.n_obs
    assert abs(find_row(ov, "Share of answers missing")[1] - ref.missing_fraction) < TOL
    assert abs(ref.missing_fraction - np.isnan(x).mean()) < 1e-15  # numpy: the share of NaN cells
    assert find_row(ov, "Correlation matrix positive definite")[1] == ("yes" if ref.positive_definite else "no")
    start = [i for i, r in enumerate(ov) if r[:2] == ["Factor", "Reduced-matrix eigenvalue"]][0] + 1
    eig = np.array([ov[start + k][3] for k in range(p)])
    share = np.array([ov[start + k][4] for k in range(p)])
    reduced = np.array([ov[start + k][1] for k in range(p)])
    # numpy: the reduced matrix is R with the squared multiple correlations 1 - 1/diag(R^-1) on its diagonal
    rr = ref.matrix.copy()
    np.fill_diagonal(rr, 1 - 1 / np.diag(np.linalg.inv(ref.matrix)))
    assert np.max(np.abs(reduced - np.sort(np.linalg.eigvalsh(rr))[::-1])) < 1e-10
    assert [ov[start + k][0] for k in range(p)] == list(range(1, p + 1))
    assert np.max(np.abs(eig - ref.eigenvalues)) < TOL
    # numpy.linalg.eigvalsh of the C library's matrix: the eigenvalues themselves
    assert np.max(np.abs(eig - np.sort(np.linalg.eigvalsh(ref.matrix))[::-1])) < 1e-10
    assert np.max(np.abs(share - ref.eigenvalues / ref.eigenvalues.sum())) < TOL
    random_col = [ov[start + k][2] for k in range(p)]
    # the C ABI's factor count: parallel analysis with the run's seed
    cnt = lode.count_factors(x, replicates=500, seed=4242, correlation="pearson", missing="pairwise", item_names=names)
    assert np.max(np.abs(np.array(random_col) - cnt.parallel["random_factor_percentile"])) < TOL
    assert np.max(np.abs(reduced - cnt.parallel["observed_factor"])) < TOL
    decision = find_row(ov, "Decision")
    assert decision[1] == cnt.suggested and decision[2] == cnt.reason
    rules_at = [i for i, r in enumerate(ov) if r[:2] == ["Rule", "Factors"]][0] + 1
    assert [(r["rule"], str(r["factors"])) for r in cnt.table] == \
           [(ov[rules_at + i][0], ov[rules_at + i][1]) for i in range(len(cnt.table))]
    # Factorability: the C library, and the textbook formulas in numpy/scipy (KMO: Kaiser 1974, from
    # the anti-image partial correlations; Bartlett 1950: -(n - 1 - (2p + 5)/6) log det R on p(p-1)/2 df).
    fa = lode.factorability(ref)
    kmo_row = find_row(ov, "KMO sampling adequacy")
    assert abs(kmo_row[1] - fa.kmo) < TOL and fa.kmo_label in kmo_row[2]
    R = ref.matrix
    Ri = np.linalg.inv(R)
    partial = -Ri / np.sqrt(np.outer(np.diag(Ri), np.diag(Ri)))
    off = ~np.eye(p, dtype=bool)
    kmo_np = (R[off] ** 2).sum() / ((R[off] ** 2).sum() + (partial[off] ** 2).sum())
    assert abs(kmo_row[1] - kmo_np) < 1e-10
    # the verdict first, then the figures: Bartlett's p (as "< 0.001" when it is), then chi-square and df
    verdict_at = [i for i, r in enumerate(ov) if r[:1] == ["Verdict"]][0]
    assert ov[verdict_at - 1][0] == "Can these items be factored?"
    assert find_row(ov, "Verdict")[1].startswith("yes" if fa.kmo >= 0.5 and fa.bartlett["p_value"] < 0.05 else "doubtful")
    _, chi, df = find_row(ov, "Bartlett's chi-square, degrees of freedom")[:3]
    pv = find_row(ov, "Are the items unrelated? Bartlett's p")[1]
    assert pv == ("< 0.001" if fa.bartlett["p_value"] < 0.001 else fa.bartlett["p_value"])
    pv = fa.bartlett["p_value"]
    assert abs(chi - fa.bartlett["chi_square"]) < TOL and df == fa.bartlett["df"]
    n = fa.bartlett["n_obs"]
    assert n == ref.n_obs
    chi_np = -(n - 1 - (2 * p + 5) / 6) * np.linalg.slogdet(R)[1]
    assert abs(chi - chi_np) < 1e-8 * chi_np and df == p * (p - 1) / 2
    import scipy.stats
    assert abs(pv - scipy.stats.chi2.sf(chi_np, df)) < 1e-12

    # Items to look at: MSA under 0.50 (Kaiser 1974), then SMC under 0.20 (common practice).
    flagged = [r for r in ov if r and r[0] in names and ("MSA" in str(r[2]) or "squared multiple" in str(r[2]))]
    expected = [(nm, m, "MSA") for nm, m in zip(names, fa.msa) if m < 0.50] + \
               [(nm, s, "squared multiple") for nm, s in zip(names, ref.smc) if s < 0.20]
    assert [r[0] for r in flagged] == [e[0] for e in expected]
    for r, (nm, v, why) in zip(flagged, expected):
        assert abs(r[1] - v) < TOL and why in r[2]
    text = " ".join(str(v) for r in ov for v in r if isinstance(v, str))
    assert "estimates" in text and "validity" in text and "local law" in text  # the cautions on scores

    ld = read_sheet(survey.Sheets.getByName("Lode loadings"))
    hdr = [i for i, r in enumerate(ld) if r[:2] == ["Item", "Starting communality (SMC)"]][0]
    got = {r[0]: r[1] for r in ld[hdr + 1:hdr + 1 + p]}
    assert list(got) == names
    assert max(abs(got[n] - s) for n, s in zip(names, ref.smc)) < TOL
    msa = [r[2] for r in ld[hdr + 1:hdr + 1 + p]]
    assert np.max(np.abs(np.array(msa) - fa.msa)) < TOL
    assert "0.35" in ld[1][0]  # the threshold chosen is the one the sheet states
    heading = survey.Sheets.getByName("Lode loadings").getCellByPosition(0, hdr)
    assert heading.CellStyle == "Lode heading"
    style = survey.StyleFamilies.getByName("CellStyles").getByName("Lode heading")
    assert style.CellBackColor == 0xDCE8D2 and not style.IsCellBackgroundTransparent

    check_model(survey, ov, ld, x, names, cnt.suggested, salient=0.35, seed=4242)

    fc = read_sheet(survey.Sheets.getByName("Lode factors"))
    top = [i for i, r in enumerate(fc) if r[:1] == ["Item correlations used"]][0] + 1
    assert fc[top][1:1 + p] == names
    m = np.array([fc[top + 1 + i][1:1 + p] for i in range(p)])
    assert [fc[top + 1 + i][0] for i in range(p)] == names
    assert np.max(np.abs(m - ref.matrix)) < TOL

    sc_sheet = survey.Sheets.getByName("Lode scree")
    sc = read_sheet(sc_sheet)
    top = [i for i, r in enumerate(sc) if r[:2] == ["Factor", "Reduced eigenvalue"]][0]
    # both versions, each beside its random-data line: the count's reduced-matrix eigenvalues first
    assert np.max(np.abs(np.array([sc[top + 1 + k][1] for k in range(p)]) - reduced)) < TOL
    assert np.max(np.abs(np.array([sc[top + 1 + k][2] for k in range(p)]) - cnt.parallel["random_factor_percentile"])) < TOL
    assert np.max(np.abs(np.array([sc[top + 1 + k][3] for k in range(p)]) - ref.eigenvalues)) < TOL
    lines = 5
    assert np.max(np.abs(np.array([sc[top + 1 + k][4] for k in range(p)]) - cnt.parallel["random_pc_percentile"])) < TOL
    charts = sc_sheet.getCharts()
    assert charts.getCount() == 1
    chart = charts.getByIndex(0)
    (rng,) = chart.getRanges()
    assert (rng.StartColumn, rng.StartRow, rng.EndColumn, rng.EndRow) == (0, top, lines - 1, top + p)
    cdoc = chart.getEmbeddedObject()
    assert cdoc.getDiagram().getDiagramType() == "com.sun.star.chart.LineDiagram"
    # the chart's four lines: reduced-matrix eigenvalues and their random line, then the correlations' own
    first = cdoc.getData().getData()[0]
    assert list(first) == pytest.approx([reduced[0], cnt.parallel["random_factor_percentile"][0], ref.eigenvalues[0],
                                         cnt.parallel["random_pc_percentile"][0]], abs=TOL)

    rr = read_sheet(survey.Sheets.getByName("Lode run record"))
    rec = {r[0]: r[1] for r in rr if r and len(r) > 1 and r[1] is not None}
    assert rec["Lode version"].startswith(lode.version()["version"] + " (C ABI ")
    assert rec["Source range"] == "$Responses.$A$1:$AE$421"
    assert rec["Items"] == ", ".join(names)
    assert rec["Values hash (FNV-1a 64)"] == fnv1a64(x, names)
    # options in the dialog's words, never the option codes
    assert rec["Correlations"] == "Pearson" and rec["Missing answers"] == "Pairwise: all who answered both"
    assert rec["Random seed"] == "4242" and rec["Strong loading from"] == 0.35
    assert rec["Number of factors"] == "suggest" and rec["Rotation"] == "Oblimin (factors may correlate)" \
        and rec["Extraction"] == "Least squares residuals"
    assert time.strftime("%Y-%m-%d", time.gmtime()) in rec["Written"]


def check_model(doc, ov, ld, x, names, k, salient, seed):
    """The loadings, communalities, factor correlations, residuals and fit against lode.fit (the C
    library) with the same options: minres, oblimin (gamma 0), the run's seed."""
    m = lode.fit(x, factors=k, method="minres", rotation="oblimin", seed=seed, missing="pairwise",
                 correlation="pearson", item_names=names, gamma=0.0)
    p = len(names)
    hdr = [i for i, r in enumerate(ld) if r[:2] == ["Item", "Belongs to"]][0]
    assert ld[hdr][1:k + 4] == LD_LEAD + [f"Factor {f + 1}" for f in range(k)]
    # the band above the factors: the share of all the items' variance each explains (numpy)
    assert ld[hdr - 1][0] == "Share of all the items' variance"
    assert np.max(np.abs(np.array(ld[hdr - 1][4:4 + k]) - (m.loadings ** 2).sum(axis=0) / p)) < 1e-12
    rows = ld[hdr + 1:hdr + 1 + p]
    L = m.loadings
    home = np.argmax(np.abs(L), axis=1)
    order = sorted(range(p), key=lambda j: (home[j], -abs(L[j, home[j]])))
    assert [r[0] for r in rows] == [names[j] for j in order]
    sheet = doc.Sheets.getByName("Lode loadings")
    for i, j in enumerate(order):
        assert np.max(np.abs(np.array(rows[i][4:4 + k]) - L[j])) < 1e-12
        assert abs(rows[i][2] - m.communalities[j]) < 1e-12 and abs(rows[i][3] - m.uniquenesses[j]) < 1e-12
        strong = [str(f + 1) for f in range(k) if abs(L[j, f]) >= salient]
        assert rows[i][1] == ("none clearly" if not strong else
                              ("factor " if len(strong) == 1 else "factors ") + " and ".join(strong))
        for f in range(k):
            style = sheet.getCellByPosition(4 + f, hdr + 1 + i).CellStyle
            assert style == ("Lode strong loading" if abs(L[j, f]) >= salient else "Lode faint loading")
    assert abs(find_row(ov, "Root mean square residual (RMSR)")[1] - m.statistics["rmsr"]) < 1e-12
    assert abs(find_row(ov, "RMSEA")[1] - m.statistics["rmsea"]) < 1e-12
    assert abs(find_row(ov, "TLI")[1] - m.statistics["tli"]) < 1e-12
    # minres: the chi-square family is the ML discrepancy at a non-ML solution, and the sheet says so
    assert "not a likelihood-ratio test" in find_row(ov, "About these figures")[1]
    fs = read_sheet(doc.Sheets.getByName("Lode factors"))
    if m.oblique:
        at = [i for i, r in enumerate(fs) if r[:1] == ["Factor correlations"]][0] + 2
        phi = np.array([fs[at + a][1:1 + k] for a in range(k)])
        assert np.max(np.abs(phi - m.factor_correlations)) < 1e-12
    # the residuals in the loadings sheet's item order
    at = [i for i, r in enumerate(fs) if isinstance(r[0], str) and r[0].startswith("Residual correlations")][0] + 3
    assert [fs[at + i][0] for i in range(p)] == [names[j] for j in order]
    res = np.empty((p, p))
    for a, i in enumerate(order):
        for b, j in enumerate(order):
            res[i, j] = fs[at + a][1 + b]
    assert np.max(np.abs(res - m.residuals)) < 1e-12
    # numpy: the residuals are the observed minus the model's correlations (L Phi L' + uniquenesses)
    implied = m.loadings @ m.factor_correlations @ m.loadings.T
    np.fill_diagonal(implied, 1.0)
    r = lode.correlation(x, method="pearson", missing="pairwise").matrix
    assert np.max(np.abs((r - implied)[~np.eye(p, dtype=bool)] - res[~np.eye(p, dtype=bool)])) < 1e-8


def test_listwise_spearman_and_chosen_items(office, survey, service):
    names, x = survey_values()
    items = names[:12]
    before = sheet_names(survey)
    with office.watchdog(300):
        service.run(survey, source(survey), props(Correlation="spearman", Missing="listwise", Items=items))
    new = [n for n in sheet_names(survey) if n not in before]
    fc = read_sheet(survey.Sheets.getByName(new[2]))
    top = [i for i, r in enumerate(fc) if r[:1] == ["Item correlations used"]][0] + 1
    m = np.array([fc[top + 1 + i][1:13] for i in range(12)])
    ref = lode.correlation(x[:, :12], method="spearman", missing="listwise", item_names=items)
    assert np.max(np.abs(m - ref.matrix)) < TOL
    # scipy: Spearman on the complete rows
    import scipy.stats
    xs = x[:, :12][~np.isnan(x[:, :12]).any(axis=1)]
    assert np.max(np.abs(m - scipy.stats.spearmanr(xs).correlation)) < 1e-10


def test_second_run_does_not_overwrite_the_first(office, survey, service):
    first = snapshot(survey)
    with office.watchdog(300):
        said = service.run(survey, source(survey), props(Correlation="pearson"))
    after = sheet_names(survey)
    new = [n for n in after if n not in first]
    assert len(new) == len(REPORT_SHEETS) and all(n.startswith("Lode ") for n in new)
    assert not set(new) & set(first)
    for n in new:
        assert n in said
    for n, block in first.items():
        assert used_block(survey.Sheets.getByName(n)) == block, f"sheet {n} changed"
    ov = read_sheet(survey.Sheets.getByName(new[0]))
    for n in new:  # the overview names the sheets as they ended up
        assert [n] in [r[:1] for r in ov]


def test_cancelled_run_leaves_the_workbook_as_it_was(office, survey, service):
    before = snapshot(survey)
    styles = cell_styles(survey)
    with office.watchdog(300), pytest.raises(IllegalArgumentException) as e:
        service.run(survey, source(survey), props(CancelAfterSheets=2))
    assert "cancelled" in e.value.Message
    assert snapshot(survey) == before
    assert cell_styles(survey) == styles
    assert service.lastOutcome().startswith("stopped")


def test_cancel_from_another_caller_while_running_in_the_background(office, survey, service):
    before = snapshot(survey)
    with office.watchdog(300):
        assert service.start(survey, source(survey), props(Correlation="polychoric"), None)
        service.cancel()
        deadline = time.monotonic() + 200
        while service.isRunning() and time.monotonic() < deadline:
            time.sleep(0.05)
    assert not service.isRunning()
    assert service.lastOutcome().startswith("stopped: the analysis was cancelled"), service.lastOutcome()
    assert snapshot(survey) == before


def test_background_run_finishes_and_reports(office, survey, service):
    before = sheet_names(survey)
    with office.watchdog(300):
        assert service.start(survey, source(survey), props(Correlation="pearson", Missing="listwise"), None)
        deadline = time.monotonic() + 200
        while service.isRunning() and time.monotonic() < deadline:
            time.sleep(0.05)
    out = service.lastOutcome()
    new = [n for n in sheet_names(survey) if n not in before]
    assert len(new) == len(REPORT_SHEETS) and all(n in out for n in new), out


@pytest.mark.parametrize("opts,words", [
    (dict(Correlation="kendall"), "Correlation"),
    (dict(Salient=1.5), "Salient"),
    (dict(Items=["ROL1", "NOPE"]), "NOPE"),
    (dict(Items=["respondent", "ROL1", "ROL2"]), "no numbers"),
    (dict(Colour="green"), "unknown option Colour"),
    (dict(Scores="anderson"), "correlation_preserving"),
    (dict(ScoresPlace="below"), "ScoresPlace"),
    (dict(Bootstrap=-5), "Bootstrap"),
])
def test_bad_options_are_named_and_change_nothing(office, survey, service, opts, words):
    before = snapshot(survey)
    with office.watchdog(120), pytest.raises(IllegalArgumentException) as e:
        service.run(survey, source(survey), props(**opts))
    assert words in e.value.Message
    assert snapshot(survey) == before


def test_menu_toolbar_and_protocol_handler_are_registered(office):
    cp = office.smgr.createInstanceWithContext("com.sun.star.configuration.ConfigurationProvider", office.ctx)
    arg = PropertyValue("nodepath", 0, "/org.openoffice.Office.Addons/AddonUI", 0)
    ui = cp.createInstanceWithArguments("com.sun.star.configuration.ConfigurationAccess", (arg,))
    menu = ui.getByName("OfficeMenuBar").getByName("org.lode.calc.menu")
    urls = [menu.Submenu.getByName(n).URL for n in menu.Submenu.ElementNames]
    assert "org.lode.calc:analyse" in urls and "org.lode.calc:stop" in urls
    assert ui.getByName("OfficeToolBar").getByName("org.lode.calc.toolbar").getByName("b1").URL == "org.lode.calc:analyse"
    arg = PropertyValue("nodepath", 0, "/org.openoffice.Office.ProtocolHandler/HandlerSet", 0)
    hs = cp.createInstanceWithArguments("com.sun.star.configuration.ConfigurationAccess", (arg,))
    assert "org.lode.calc:*" in hs.getByName("org.lode.calc.DialogHandlerImpl").Protocols


def test_cell_functions_and_report_service_live_side_by_side(office, service):
    """Both parts of the extension come from its own registration (soffice does not see this
    Python's URE_MORE_TYPES): a cell function still evaluates in the office running the service."""
    doc = office.new_calc()
    try:
        with office.watchdog(60):
            cell = doc.Sheets.getByIndex(0).getCellByPosition(0, 0)
            cell.setFormula("=LODE.VERSION()")
            assert cell.getError() == 0 and cell.getString().startswith("Lode ")
    finally:
        with office.watchdog(60):
            doc.close(True)


# --- reliability, factor scores -----------------------------------------------------------------------

K_FIXED = 5  # the demo's designed factors (volunteer-survey-truth.json); fixed so the references need no count


def survey_rows():
    """The demo CSV as spreadsheet rows: the header, then respondent code and answers (None = empty)."""
    with open(os.path.join(SHEETS, "volunteer-survey-responses.csv"), newline="") as f:
        rows = list(csv.reader(f))
    return [rows[0]] + [[r[0]] + [float(v) if v != "" else None for v in r[1:]] for r in rows[1:]]


def new_book(office, rows, extra=()):
    """A new workbook whose first sheet ('Answers') holds `rows` from A1; `extra` are (col, row, value)
    cells written as well (to fill cells right of the data)."""
    from office import fill
    doc = office.new_calc()
    with office.watchdog(120):
        sheet = doc.Sheets.getByIndex(0)
        sheet.Name = "Answers"
        fill(sheet, 0, 0, rows)
        for c, r, v in extra:
            cell = sheet.getCellByPosition(c, r)
            if isinstance(v, str):
                cell.setString(v)
            else:
                cell.setValue(v)
    return doc


def range_of(doc, sheet_name, cols, rows):
    a = uno.createUnoStruct("com.sun.star.table.CellRangeAddress")
    a.Sheet = sheet_names(doc).index(sheet_name)
    a.StartColumn, a.StartRow, a.EndColumn, a.EndRow = 0, 0, cols - 1, rows - 1
    return a


def cell_value(sheet, c, r):
    cell = sheet.getCellByPosition(c, r)
    t = cell.Type.value
    return None if t == "EMPTY" else cell.String if t == "TEXT" else cell.Value


def numpy_alpha(x):
    """Cronbach (1951) from its definition, with numpy: k/(k-1) (1 - sum of item variances / variance
    of the total), variances with n - 1; standardised alpha k rbar / (1 + (k-1) rbar)."""
    k = x.shape[1]
    raw = k / (k - 1) * (1 - x.var(axis=0, ddof=1).sum() / x.sum(axis=1).var(ddof=1))
    r = np.corrcoef(x, rowvar=False)
    rbar = r[~np.eye(k, dtype=bool)].mean()
    return raw, k * rbar / (1 + (k - 1) * rbar), rbar


def test_reliability_per_scale_matches_the_c_library_and_numpy(office, survey, service):
    names, x = survey_values()
    p = len(names)
    before = sheet_names(survey)
    with office.watchdog(300):
        service.run(survey, source(survey), props(Factors=K_FIXED, Seed=77, Extraction="minres"))
    new = [n for n in sheet_names(survey) if n not in before]
    fc = read_sheet(survey.Sheets.getByName(new[2]))
    # The C library with the report's options (minres, oblimin gamma 0, pairwise Pearson, the seed).
    m = lode.fit(x, factors=K_FIXED, method="minres", rotation="oblimin", seed=77, missing="pairwise",
                 correlation="pearson", item_names=names, gamma=0.0)
    L, psi = m.loadings, m.uniquenesses
    home = np.argmax(np.abs(L), axis=1)  # numpy: the factor of each item's largest absolute loading
    om = lode.omega(m)
    assert list(om.assignment) == list(home)  # the C library's rule is the one the sheet states
    reversed_ = L[np.arange(p), home] < 0
    text = " ".join(str(v) for r in fc for v in r if isinstance(v, str))
    assert "largest absolute loading" in text
    rev_names = [n for n, r in zip(names, reversed_) if r]
    assert rev_names, "the demo has reverse-keyed items (volunteer-survey-truth.json)"
    assert "Reverse-scored for these figures, because they load negatively on their factor: " + \
        ", ".join(rev_names) in text

    at = [i for i, r in enumerate(fc) if r[:3] == ["Scale", "Reading (omega total)", "Omega total"]][0] + 1
    order = sorted(range(p), key=lambda j: (home[j], -abs(L[j, home[j]])))
    for f in range(K_FIXED):
        row = fc[at + f]
        items = [j for j in order if home[j] == f]
        assert row[0] == f"Factor {f + 1}" and row[7] == len(items)
        # Omega (McDonald 1999) with numpy, over the model-implied variance of the scale's sum
        # 1' Sigma_SS 1, Sigma = L Phi L' + Psi, reverse-scored items entering with their rows of
        # loadings reversed: omega total = 1' (L Phi L')_SS 1 / 1' Sigma_SS 1, the factor's share =
        # (sum of the loadings on f)^2 / 1' Sigma_SS 1.
        Lr = L * np.where(reversed_, -1.0, 1.0)[:, None]
        common = (Lr @ m.factor_correlations @ Lr.T)[np.ix_(items, items)].sum()
        var = common + psi[items].sum()
        omega_np, share_np = common / var, Lr[items, f].sum() ** 2 / var
        assert fc[at - 1][2] == "Omega total" and fc[at - 1][3] == "Omega, factor's own share"
        if reversed_[items].any():  # from the refit to the reversed correlations: equal up to the fit's tolerance
            assert abs(row[2] - omega_np) < 1e-6, (f, row[2], omega_np)
            assert abs(row[3] - share_np) < 1e-6, (f, row[3], share_np)
        else:  # the C library's omega of this model, exactly
            assert abs(row[2] - om.omega[f]) < 1e-12 and abs(row[2] - omega_np) < 1e-10
            assert abs(row[3] - om.factor_share[f]) < 1e-12 and abs(row[3] - share_np) < 1e-10
        # Alpha on the scale's items, reverse-scored ones as (lowest + highest answer) - answer.
        xs = x[:, items].copy()
        for c, j in enumerate(items):
            if reversed_[j]:
                xs[:, c] = np.nanmin(x[:, j]) + np.nanmax(x[:, j]) - xs[:, c]
        a = lode.alpha(xs, item_names=[names[j] for j in items])  # the C library
        complete = xs[~np.isnan(xs).any(axis=1)]
        raw, std, rbar = numpy_alpha(complete)
        assert abs(row[4] - a.alpha) < 1e-12 and abs(row[4] - raw) < 1e-10
        assert abs(row[6] - a.alpha_standardized) < 1e-12 and abs(row[6] - std) < 1e-10
        assert abs(row[5] - rbar) < 1e-10 and row[8] == complete.shape[0] == a.rows_used
        # The items of the scale: loading, reverse-scoring, corrected item-total correlation, alpha if
        # deleted (numpy: alpha of the other items; the item against the sum of the others).
        top = [i for i, r in enumerate(fc) if r[:1] == [f"Items of factor {f + 1}'s scale"]][0] + 3
        assert fc[top - 1][:4] == ["Item", "Reverse-scored", "Loading", "Correlation with the sum of the others"]
        for c, j in enumerate(items):
            r = fc[top + c]
            assert r[0] == names[j] and abs(r[2] - L[j, f]) < 1e-12 and r[1] == ("yes" if reversed_[j] else "no")
            rest = np.delete(complete, c, axis=1)
            itc = np.corrcoef(complete[:, c], rest.sum(axis=1))[0, 1]
            assert abs(r[3] - a.item_total_correlation[c]) < 1e-12 and abs(r[3] - itc) < 1e-10
            if len(items) > 2:
                assert abs(r[4] - a.alpha_if_deleted[c]) < 1e-12 and abs(r[4] - numpy_alpha(rest)[0]) < 1e-10
                assert abs(r[5] - numpy_alpha(rest)[1]) < 1e-10
            assert abs(r[6] - complete[:, c].mean()) < 1e-10 and abs(r[7] - complete[:, c].std(ddof=1)) < 1e-10
    rr = read_sheet(survey.Sheets.getByName(new[-1]))
    rec = {r[0]: r[1] for r in rr if r and len(r) > 1 and r[1] is not None}
    assert rec["Scale membership (reliability)"].startswith("largest absolute loading")


def scores_block(sheet, top, left, rows, cols):
    return [[cell_value(sheet, left + c, top + r) for c in range(cols)] for r in range(rows)]


def check_score_values(got, ref):
    """Cells against the C library's scores: a number where it has one, an empty cell where it has NaN."""
    for i, row in enumerate(got):
        for f, v in enumerate(row):
            if np.isnan(ref[i, f]):
                assert v is None, (i, f, v)
            else:
                assert v is not None and abs(v - ref[i, f]) < 1e-12, (i, f, v, ref[i, f])


def test_scores_beside_the_data_when_the_columns_are_empty(office, service):
    names, x = survey_values()
    rows = survey_rows()
    doc = new_book(office, rows)
    try:
        n, cols = len(rows), len(rows[0])
        before = snapshot(doc)
        with office.watchdog(300):
            said = service.run(doc, range_of(doc, "Answers", cols, n),
                               props(Factors=K_FIXED, Scores="regression", ScoresPlace="beside", Seed=5, Extraction="minres"))
        assert "columns AF to AJ of Answers" in said
        answers = doc.Sheets.getByName("Answers")
        # The data block itself is unchanged; the only new cells of the sheet are the score columns.
        (c0, r0, c1, r1), block = used_block(answers)
        assert (c0, r0, c1, r1) == (0, 0, cols - 1 + K_FIXED, n - 1)
        assert tuple(row[:cols] for row in block) == before["Answers"][1]
        assert "Lode scores" not in sheet_names(doc)
        hdr = scores_block(answers, 0, cols, 1, K_FIXED)[0]
        assert hdr == [f"Factor {f + 1} score (regression)" for f in range(K_FIXED)]
        m = lode.fit(x, factors=K_FIXED, method="minres", rotation="oblimin", seed=5, missing="pairwise",
                     correlation="pearson", item_names=names, gamma=0.0)
        s = lode.scores(x, m, "regression")  # the C library; pairwise runs score from the answered items
        check_score_values(scores_block(answers, 1, cols, n - 1, K_FIXED), s.values)
        assert s.rows_partial > 0  # respondents who skipped items, scored from what they answered
        # (blank rows, left by the listwise rule, are checked in test_scores_never_overwrite_a_filled_column)
        # the cautions next to the scores: a comment on each heading
        anns = answers.getAnnotations()
        notes = {(a.Position.Column, a.Position.Row): a.String for a in (anns.getByIndex(i) for i in range(anns.getCount()))}
        assert sorted(notes) == [(cols + f, 0) for f in range(K_FIXED)]
        for t in notes.values():
            assert s.cautions in t and "at least 50%" in t
        ov = read_sheet(doc.Sheets.getByName("Lode overview"))
        assert find_row(ov, "Written to")[1] == "columns AF to AJ of Answers, beside the data"
        assert find_row(ov, "Respondents scored from every item")[1] == s.rows_complete
        assert find_row(ov, "Respondents scored from the items they answered")[1] == s.rows_partial
        assert find_row(ov, "Respondents without scores (blank)")[1] == s.rows_missing
        assert "at least 50%" in find_row(ov, "Rule for skipped items")[1]
        assert [s.cautions] in [r[:1] for r in ov]
        det = [i for i, r in enumerate(ov) if r[:2] == ["Factor", "Determinacy"]][0] + 1
        for f in range(K_FIXED):
            assert abs(ov[det + f][1] - s.determinacy[f]) < 1e-12 and abs(ov[det + f][2] - s.validity[f]) < 1e-12
        rr = read_sheet(doc.Sheets.getByName("Lode run record"))
        rec = {r[0]: r[1] for r in rr if r and len(r) > 1 and r[1] is not None}
        assert rec["Factor scores"] == "Regression" and rec["Factor scores placed"] == "Beside the data, if empty"
        assert rec["Factor scores written to"] == "columns AF to AJ of Answers, beside the data"

        # A second run asking for scores beside the data finds those columns filled: its scores go to a
        # sheet of their own and the first run's columns stay as they were.
        first = snapshot(doc)
        with office.watchdog(300):
            said = service.run(doc, range_of(doc, "Answers", cols, n),
                               props(Factors=K_FIXED, Scores="bartlett", ScoresPlace="beside", Seed=5, Extraction="minres"))
        assert used_block(answers) == first["Answers"]
        assert "Lode scores" in sheet_names(doc) and "Lode scores" in said
    finally:
        with office.watchdog(60):
            doc.close(True)


def test_scores_never_overwrite_a_filled_column(office, service):
    names, x = survey_values()
    rows = survey_rows()
    cols, n = len(rows[0]), len(rows)
    # column AH (two right of the data) holds a note in one row: five score columns would cover it
    doc = new_book(office, rows, extra=[(cols + 2, 57, "checked by hand")])
    try:
        before = snapshot(doc)
        with office.watchdog(300):
            said = service.run(doc, range_of(doc, "Answers", cols, n),
                               # "tenberge": the former word for correlation_preserving, still read
                               props(Factors=K_FIXED, Scores="tenberge", ScoresPlace="beside", Missing="listwise", Extraction="minres",
                                     Seed=9))
        assert snapshot(doc)["Answers"] == before["Answers"]  # nothing written beside the data
        assert "Lode scores" in said
        ov = read_sheet(doc.Sheets.getByName("Lode overview"))
        assert find_row(ov, "Written to")[1] == "Lode scores"
        assert "not all empty" in find_row(ov, "Not beside the data")[1]
        sc = read_sheet(doc.Sheets.getByName("Lode scores"))
        m = lode.fit(x, factors=K_FIXED, method="minres", rotation="oblimin", seed=9, missing="listwise",
                     correlation="pearson", item_names=names, gamma=0.0)
        s = lode.scores(x, m, "correlation_preserving", missing="leave_missing")  # listwise: any skipped item, no scores
        assert s.rows_missing == int(np.isnan(x).any(axis=1).sum())  # numpy: the incomplete rows
        text = " ".join(str(v) for r in sc[:6] for v in r if isinstance(v, str))
        assert s.cautions in text and "skipped any item" in text and "not all empty" in text
        hdr = [i for i, r in enumerate(sc) if r[:1] == ["Row in Answers"]][0]
        assert sc[hdr][1:] == ["respondent"] + [f"Factor {f + 1} score (correlation-preserving)" for f in range(K_FIXED)]
        body = sc[hdr + 1:hdr + n]
        assert [r[0] for r in body] == list(range(2, n + 1))  # the sheet rows of the respondents
        assert [r[1] for r in body] == [r[0] for r in rows[1:]]  # their codes, to match them up
        check_score_values([r[2:2 + K_FIXED] for r in body], s.values)
    finally:
        with office.watchdog(60):
            doc.close(True)


def test_ml_varimax_regression_scores_match_r_factanal(office, service):
    names, x = survey_values()
    xc = x[~np.isnan(x).any(axis=1)]  # factanal needs complete data: the complete respondents alone
    rows = [names] + xc.tolist()
    doc = new_book(office, rows)
    try:
        with office.watchdog(300):
            service.run(doc, range_of(doc, "Answers", len(names), len(rows)),
                        props(Factors=K_FIXED, Extraction="ml", Rotation="varimax", Scores="regression",
                              ScoresPlace="sheet"))
        sc = read_sheet(doc.Sheets.getByName("Lode scores"))
        hdr = [i for i, r in enumerate(sc) if r[:1] == ["Row in Answers"]][0]
        got = np.array([r[1:1 + K_FIXED] for r in sc[hdr + 1:hdr + 1 + xc.shape[0]]], dtype=float)
        ld = read_sheet(doc.Sheets.getByName("Lode loadings"))
        lh = [i for i, r in enumerate(ld) if r[:2] == ["Item", "Belongs to"]][0]
        lrows = {r[0]: r[4:4 + K_FIXED] for r in ld[lh + 1:lh + 1 + len(names)]}
        L = np.array([lrows[nm] for nm in names], dtype=float)
        # Correlation-preserving scores of an oblique solution on the same complete data: ten Berge,
        # Krijnen, Wansbeek and Shapiro (1999) make them correlate exactly as the factors (numpy).
        with office.watchdog(300):
            service.run(doc, range_of(doc, "Answers", len(names), len(rows)),
                        props(Factors=K_FIXED, Rotation="oblimin", Scores="correlation_preserving", ScoresPlace="sheet"))
        sc2 = read_sheet(doc.Sheets.getByName("Lode scores 2"))
        h2 = [i for i, r in enumerate(sc2) if r[:1] == ["Row in Answers"]][0]
        tb = np.array([r[1:1 + K_FIXED] for r in sc2[h2 + 1:h2 + 1 + xc.shape[0]]], dtype=float)
        fs = read_sheet(doc.Sheets.getByName("Lode factors 2"))
        at = [i for i, r in enumerate(fs) if r[:1] == ["Factor correlations"]][0] + 2
        phi = np.array([fs[at + a][1:1 + K_FIXED] for a in range(K_FIXED)], dtype=float)
        assert np.max(np.abs(phi - np.eye(K_FIXED))) > 0.05  # an oblique solution: the property has teeth
        assert np.max(np.abs(np.corrcoef(tb, rowvar=False) - phi)) < 1e-8
    finally:
        with office.watchdog(60):
            doc.close(True)
    # Reference: R's stats::factanal, maximum likelihood with tight optimiser controls, varimax run to
    # eps = 1e-14 (its default 1e-5 would move the scores by about 1e-2), regression (Thomson) scores.
    from refs import run_r
    ref = run_r(f"""
        ctl <- list(nstart = 1, lower = 0.005, opt = list(factr = 1, pgtol = 0, maxit = 10000),
                    rotate = list(eps = 1e-14))
        f <- factanal(X, factors = {K_FIXED}, rotation = "varimax", scores = "regression", control = ctl)
        emit("s", f$scores); emit("l", unclass(f$loadings))
    """, {"X": xc})
    order = [int(np.argmax(np.abs(L.T @ ref["l"][:, j]))) for j in range(K_FIXED)]
    assert sorted(order) == list(range(K_FIXED))
    signs = np.sign(np.sum(L[:, order] * ref["l"], axis=0))
    assert np.max(np.abs(L[:, order] * signs - ref["l"])) < 1e-4
    assert np.max(np.abs(got[:, order] * signs - ref["s"])) < 1e-3


def test_cancelled_run_removes_the_score_columns_it_wrote(office, service):
    rows = survey_rows()
    doc = new_book(office, rows)
    try:
        before = snapshot(doc)
        styles = cell_styles(doc)
        for after in (0, 1, 3):  # before anything, after the score columns, after two sheets as well
            with office.watchdog(300), pytest.raises(IllegalArgumentException) as e:
                service.run(doc, range_of(doc, "Answers", len(rows[0]), len(rows)),
                            props(Factors=K_FIXED, Scores="regression", CancelAfterSheets=after))
            assert "cancelled" in e.value.Message
            assert snapshot(doc) == before, after
            assert cell_styles(doc) == styles
            assert doc.Sheets.getByName("Answers").getAnnotations().getCount() == 0
    finally:
        with office.watchdog(60):
            doc.close(True)


# --- bootstrap intervals --------------------------------------------------------------------------------


def test_bootstrap_intervals_beside_the_loadings(office, survey, service):
    names, x = survey_values()
    p, B = len(names), 40
    before = sheet_names(survey)
    with office.watchdog(600):
        service.run(survey, source(survey), props(Factors=K_FIXED, Bootstrap=B, Seed=31, Extraction="minres"))
    new = [n for n in sheet_names(survey) if n not in before]
    ov = read_sheet(survey.Sheets.getByName(new[0]))
    ld = read_sheet(survey.Sheets.getByName(new[1]))
    rr = read_sheet(survey.Sheets.getByName(new[-1]))
    rec = {r[0]: r[1] for r in rr if r and len(r) > 1 and r[1] is not None}
    assert rec["Bootstrap resamples"] == B and rec["Bootstrap seed"].startswith("31 ")
    # The C library with the report's options: minres, oblimin (gamma 0), the run's seed for the
    # rotation's starts and the resamples, each resample's rotation from the unrotated loadings.
    b = lode.bootstrap(x, factors=K_FIXED, method="minres", rotation="oblimin", gamma=0.0, replicates=B, seed=31,
                       missing="pairwise", correlation="pearson", item_names=names, keep_replicates=True)
    m = lode.fit(x, factors=K_FIXED, method="minres", rotation="oblimin", seed=31, missing="pairwise",
                 correlation="pearson", item_names=names, gamma=0.0)
    assert np.max(np.abs(b.loadings - m.loadings)) < 1e-12  # intervals around the solution shown
    # numpy: percentile intervals are the type-7 quantiles (numpy's default) of the aligned resamples
    lo, hi = np.percentile(b.replicate_loadings, [2.5, 97.5], axis=0)
    assert np.max(np.abs(lo - b.loadings_lower)) < 1e-12 and np.max(np.abs(hi - b.loadings_upper)) < 1e-12
    hdr = [i for i, r in enumerate(ld) if r[:2] == ["Item", "Belongs to"]][0]
    want = LD_LEAD + [f"Factor {f + 1}" for f in range(K_FIXED)]
    for f in range(K_FIXED):
        want += [f"Factor {f + 1} 95% from", f"Factor {f + 1} 95% to"]
    assert ld[hdr][1:] == want
    for r in ld[hdr + 1:hdr + 1 + p]:
        j = names.index(r[0])
        assert np.max(np.abs(np.array(r[4:4 + K_FIXED]) - m.loadings[j])) < 1e-12
        got = np.array(r[4 + K_FIXED:4 + 3 * K_FIXED]).reshape(K_FIXED, 2)
        assert np.max(np.abs(got[:, 0] - b.loadings_lower[j])) < 1e-12
        assert np.max(np.abs(got[:, 1] - b.loadings_upper[j])) < 1e-12
        assert np.all(got[:, 0] <= got[:, 1])
    assert find_row(ov, "Resamples asked for")[1] == B
    assert find_row(ov, "Resamples used")[1] == b.replicates_used
    assert find_row(ov, "Resamples failed")[1] == b.replicates_failed
    assert b.replicates_used + b.replicates_failed == B
    assert find_row(ov, "How resamples were aligned")[1] == b.alignment and "congruence" in b.alignment
    assert find_row(ov, "Resamples poorly matched")[1] == b.replicates_poorly_matched
    assert rec["Bootstrap resamples used"] == b.replicates_used
    # numpy: the poorly matched count from the replicates' smallest matched congruence (under 0.85)
    assert b.replicates_poorly_matched == int(np.sum(b.min_congruence < 0.85))
    fc = read_sheet(survey.Sheets.getByName(new[2]))
    at = [i for i, r in enumerate(fc) if r[:1] == ["Factor correlations with 95% bootstrap intervals"]][0] + 2
    pairs = [(a, c) for a in range(K_FIXED) for c in range(a + 1, K_FIXED)]
    for i, (a, c) in enumerate(pairs):
        r = fc[at + i]
        assert r[0] == f"Factor {a + 1} and factor {c + 1}"
        assert abs(r[1] - m.factor_correlations[a, c]) < 1e-12
        assert abs(r[2] - b.factor_correlations_lower[a, c]) < 1e-12
        assert abs(r[3] - b.factor_correlations_upper[a, c]) < 1e-12


def test_cancel_during_the_bootstrap_leaves_the_workbook_as_it_was(office, survey, service):
    import unohelper
    from com.sun.star.task import XStatusIndicator

    class Indicator(unohelper.Base, XStatusIndicator):
        """Records what the service shows in the status bar."""

        def __init__(self):
            self.texts, self.values = [], []

        def start(self, text, rng):
            self.texts.append(text)

        def end(self):
            pass

        def setText(self, text):
            self.texts.append(text)

        def setValue(self, value):
            self.values.append(value)

        def reset(self):
            pass

    before = snapshot(survey)
    styles = cell_styles(survey)
    ind = Indicator()
    with office.watchdog(300):
        assert service.start(survey, source(survey), props(Factors=K_FIXED, Bootstrap=100000, Seed=3), ind)
        deadline = time.monotonic() + 200
        while not any("bootstrap" in t for t in ind.texts) and time.monotonic() < deadline:
            time.sleep(0.05)
        time.sleep(1.0)  # some resamples done
        service.cancel()
        while service.isRunning() and time.monotonic() < deadline:
            time.sleep(0.05)
    assert not service.isRunning()
    assert any("bootstrap" in t for t in ind.texts), ind.texts
    assert len(set(ind.values)) > 2 and max(ind.values) < 95  # progress moved, and the run did not finish
    assert service.lastOutcome().startswith("stopped: the analysis was cancelled"), service.lastOutcome()
    assert snapshot(survey) == before
    assert cell_styles(survey) == styles


# --- one factor count on every surface ------------------------------------------------------------------


def harman74_data():
    """145 rows whose Pearson correlations are exactly datasets::Harman74.cor (R's datasets; Harman 1976,
    24 tests, n = 145), up to rounding: seeded normal draws, whitened to identity sample covariance with
    numpy, then given Harman74's covariance through its Cholesky factor. The report needs raw data."""
    from refs import run_r
    r = run_r('emit("r", Harman74.cor$cov)')["r"]
    rng = np.random.default_rng(74)
    z = rng.standard_normal((145, 24))
    z -= z.mean(axis=0)
    z = z @ np.linalg.inv(np.linalg.cholesky(np.cov(z, rowvar=False))).T
    x = z @ np.linalg.cholesky(r).T
    assert np.max(np.abs(np.corrcoef(x, rowvar=False) - r)) < 1e-12
    return r, x


def test_one_factor_count_on_every_surface(office):
    """The same count from the cells (LODE.NFACTORS, and LODE.LOADINGS with factors left out), the report
    service with its defaults (what the dialog starts with) and Python (n_factors, fit(factors=0)), on raw
    data and on the correlation matrix: parallel analysis of the reduced-matrix eigenvalues against the
    95th percentile of 500 normal random data sets, seed 20260101, with every surface's defaults."""
    from office import array_formula
    # A service of its own: `run` does not clear a cancel left by an earlier test's `start` (noted, not
    # this test's subject).
    service = office.smgr.createInstanceWithContext("org.lode.calc.AnalysisReport", office.ctx)
    r, x = harman74_data()
    names = [f"T{j + 1:02d}" for j in range(24)]
    doc = new_book(office, [names] + [list(row) for row in x])
    try:
        with office.watchdog(300):
            service.run(doc, range_of(doc, "Answers", 24, 146), props())
        ov = read_sheet(doc.Sheets.getByName("Lode overview"))
        report = find_row(ov, "Decision")[1]
        sheet = doc.Sheets.getByName("Answers")
        with office.watchdog(120):
            cell = sheet.getCellByPosition(30, 0)
            cell.setFormula("=LODE.NFACTORS($Answers.$A$1:$X$146)")
            assert cell.getError() == 0
            cells = cell.getValue()
            # evaluated as an array formula, so COLUMNS sees the whole loading matrix
            array_formula(sheet, 31, 0, 1, 1, "=COLUMNS(LODE.LOADINGS($Answers.$A$1:$X$146))")
            assert sheet.getCellByPosition(31, 0).getError() == 0
            fitted = sheet.getCellByPosition(31, 0).getValue()
    finally:
        with office.watchdog(60):
            doc.close(True)
    python_count = lode.n_factors(x).suggested
    python_fit = lode.fit(x, factors=0, method="minres", rotation="oblimin").factors
    from_matrix = lode.fit(corr=r, n_obs=145, factors=0).factors
    assert report == cells == fitted == python_count == python_fit == from_matrix == 4, \
        (report, cells, fitted, python_count, python_fit, from_matrix)


def test_same_loadings_on_every_surface(office):
    """One set of defaults (README, "Defaults"): with no options given, the same data give the same
    loadings through a cell (LODE.LOADINGS with only the range), the report service as the dialog starts
    it (no options: what the dialog's defaults send) and Python (lode.fit(x)): maximum likelihood,
    oblimin, the suggested count (4 on Harman74.cor, R's datasets). Every surface is the same C library;
    the report's rotation takes its random starts from the run's seed rather than the library's default
    one, and reaches the same optimum to the rotation's convergence tolerance, hence 1e-6 rather than
    rounding."""
    from office import array_formula, read_block
    service = office.smgr.createInstanceWithContext("org.lode.calc.AnalysisReport", office.ctx)
    r, x = harman74_data()
    names = [f"T{j + 1:02d}" for j in range(24)]
    python = lode.fit(x)
    assert python.factors == 4 and python.method == "ml" and python.rotation == "oblimin"
    L = python.loadings
    doc = new_book(office, [names] + [list(row) for row in x])
    try:
        with office.watchdog(300):
            service.run(doc, range_of(doc, "Answers", 24, 146), props())
        ld = read_sheet(doc.Sheets.getByName("Lode loadings"))
        rr = read_sheet(doc.Sheets.getByName("Lode run record"))
        rec = {row[0]: row[1] for row in rr if len(row) > 1}
        assert rec["Extraction"] == "Maximum likelihood (fit tests)" and rec["Rotation"] == "Oblimin (factors may correlate)" \
            and rec["Strong loading from"] == 0.40
        hdr = [i for i, row in enumerate(ld) if row[:2] == ["Item", "Belongs to"]][0]
        assert ld[hdr][4:8] == ["Factor 1", "Factor 2", "Factor 3", "Factor 4"]
        report = {row[0]: row[4:8] for row in ld[hdr + 1:hdr + 25]}
        sheet = doc.Sheets.getByName("Answers")
        with office.watchdog(300):
            array_formula(sheet, 30, 0, 4, 24, "=LODE.LOADINGS($Answers.$A$1:$X$146)")
            cells = read_block(sheet, 30, 0, 4, 24)
    finally:
        with office.watchdog(60):
            doc.close(True)
    for j, name in enumerate(names):
        assert np.max(np.abs(np.array(cells[j]) - L[j])) < 1e-10, (name, cells[j], L[j])
        assert np.max(np.abs(np.array(report[name]) - L[j])) < 1e-6, (name, report[name], L[j])
