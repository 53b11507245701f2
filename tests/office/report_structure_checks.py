"""The report service's general-factor and groups sheets in a real headless LibreOffice, checked
against the C library's Python binding on the same data: R's datasets::USJudgeRatings (12 ratings of
43 judges, 3 oblique factors) and datasets::iris (4 measurements of 150 flowers; the species, a text
column, name the groups).

Run by ctest as office_report with report_checks.py (which holds the helpers used here)."""

import numpy as np

import lode
from refs import r_dataset, run_r
from report_checks import cell_value, new_book, props, range_of, read_sheet, service, sheet_names  # noqa: F401

TOL = 1e-12  # the cells hold the C library's doubles
SPECIES = ["setosa", "versicolor", "virginica"]


def rows_by_label(rows):
    return {r[0]: r for r in rows if r and isinstance(r[0], str)}


def test_general_factor_sheet_matches_python(office, service):  # noqa: F811
    names, x = r_dataset("USJudgeRatings")
    doc = new_book(office, [names] + [list(map(float, r)) for r in x])
    try:
        before = sheet_names(doc)
        with office.watchdog(300):
            service.run(doc, range_of(doc, "Answers", x.shape[1], x.shape[0] + 1), props(Factors=3))
        new = [n for n in sheet_names(doc) if n not in before]
        assert "Lode general factor" in new and "Lode groups" not in new, new
        rows = read_sheet(doc.Sheets.getByName("Lode general factor"))
        by = rows_by_label(rows)
        # the report's rotation takes its random starts from the run's seed (default 20260101)
        sl = lode.schmid_leiman(lode.fit(x, factors=3, item_names=names, seed=20260101))
        assert abs(by["Omega hierarchical"][1] - sl.omega_hierarchical) < TOL
        assert abs(by["Omega total"][1] - sl.omega_total) < TOL
        assert abs(by["Explained common variance"][1] - sl.ecv) < TOL
        top = [i for i, r in enumerate(rows) if r[:2] == ["Item", "General factor"]][0]
        got = np.array([rows[top + 1 + i][1:5] for i in range(len(names))])
        assert [rows[top + 1 + i][0] for i in range(len(names))] == names
        assert np.max(np.abs(got[:, 0] - sl.general)) < TOL
        assert np.max(np.abs(got[:, 1:] - sl.group)) < TOL
        assert any("common practice" in str(c) for r in rows for c in r if c)
    finally:
        with office.watchdog(60):
            doc.close(True)


def test_groups_sheet_matches_python_and_carries_the_caution(office, service):  # noqa: F811
    r = run_r('emit("x", as.matrix(iris[, 1:4])); emit("s", as.numeric(iris$Species))')
    x = r["x"]
    labels = [SPECIES[int(c) - 1] for c in r["s"][:, 0]]
    names = ["Sepal.Length", "Sepal.Width", "Petal.Length", "Petal.Width"]
    doc = new_book(office, [["species"] + names] + [[s] + list(map(float, v)) for s, v in zip(labels, x)])
    try:
        before = sheet_names(doc)
        with office.watchdog(300):
            service.run(doc, range_of(doc, "Answers", 5, 151), props(Factors=1, GroupColumn="species", MinGroup=20))
        new = [n for n in sheet_names(doc) if n not in before]
        assert "Lode groups" in new and "Lode general factor" not in new, new
        rows = read_sheet(doc.Sheets.getByName("Lode groups"))
        text = " ".join(str(c) for r in rows for c in r if c)
        assert "not a formal test of measurement invariance" in text
        assert "local law and professional testing standards" in text
        gc = lode.compare_groups(x, labels, factors=1, min_group=20)
        top = [i for i, row in enumerate(rows) if row[:2] == ["Group", "Respondents"]][0]
        for g, species in enumerate(gc.groups):
            row = rows[top + 1 + g]
            assert row[0] == species and row[1] == 50.0
            assert abs(row[2] - gc.congruence[g, 0]) < TOL
        for d in gc.item_differences:
            assert f"In group {d['group']}, item {names[d['item']]} loads" in text, d
        record = rows_by_label(read_sheet(doc.Sheets.getByName("Lode run record")))
        assert record["Groups compared by"][1] == "species"
        assert record["General factor (Schmid-Leiman)"][1].startswith("not computed")
        # every group too small: the sheet says so, the rest of the report is written
        before = sheet_names(doc)
        with office.watchdog(300):
            service.run(doc, range_of(doc, "Answers", 5, 151), props(Factors=1, GroupColumn="species", MinGroup=60))
        new = [n for n in sheet_names(doc) if n not in before]
        assert any(n.startswith("Lode groups") for n in new) and any(n.startswith("Lode loadings") for n in new), new
        rows = read_sheet(doc.Sheets.getByName([n for n in new if n.startswith("Lode groups")][0]))
        assert any(str(row[0]).startswith("The groups were not compared") for row in rows if row)
    finally:
        with office.watchdog(60):
            doc.close(True)


def test_em_rule_for_missing_answers_reaches_the_report(office, service):  # noqa: F811
    """Missing="em" (the dialog's "EM: estimated under missing at random"): the correlations the report
    uses and the iterations in its run record are the C library's EM estimate on the same answers
    (R's datasets::attitude with a fixed pattern of answers deleted)."""
    names, x = r_dataset("attitude")
    x = x.copy()
    for i, j in [(0, 0), (3, 2), (7, 5), (11, 1), (19, 6), (24, 3), (28, 4)]:
        x[i, j] = np.nan
    doc = new_book(office, [names] + [[None if np.isnan(v) else float(v) for v in r] for r in x])
    try:
        before = sheet_names(doc)
        with office.watchdog(300):
            service.run(doc, range_of(doc, "Answers", x.shape[1], x.shape[0] + 1), props(Missing="em", Factors=2))
        new = [n for n in sheet_names(doc) if n not in before]
        ref = lode.correlation(x, missing="em")
        fc = read_sheet(doc.Sheets.getByName([n for n in new if n.startswith("Lode factors")][0]))
        top = [i for i, r in enumerate(fc) if r[:1] == ["Item correlations used"]][0] + 1
        p = len(names)
        m = np.array([fc[top + 1 + i][1:1 + p] for i in range(p)])
        # the report runs EM on one thread, Python on all: the same sums over 30 rows in another order,
        # rounding carried through iterations that contract towards one fixed point
        assert np.max(np.abs(m - ref.matrix)) < 1e-10
        record = rows_by_label(read_sheet(doc.Sheets.getByName([n for n in new if n.startswith("Lode run record")][0])))
        assert record["Missing answers"][1].startswith("EM: ")  # the option in the dialog's words
        assert record["EM iterations"][1] == ref.em["iterations"]
        assert record["EM met its criterion"][1] == ("yes" if ref.em["converged"] else "no: the estimate may be off")
    finally:
        with office.watchdog(60):
            doc.close(True)
