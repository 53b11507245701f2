#!/usr/bin/python3
"""Writes example-sheets/volunteer-survey-live.ods: the demo survey with Lode's cell functions live
beside the answers, on a sheet "Live analysis" an analyst reads from top to bottom.

    make_live_workbook.py --oxt build/default/office-addin/lode.oxt [--out example-sheets/volunteer-survey-live.ods]

Runs under Debian's /usr/bin/python3 (python3-uno). It starts a headless LibreOffice with a throwaway
profile and the built lode.oxt (the office tests' harness, tests/office/office.py), opens a copy of
volunteer-survey.ods, adds the sheet, enters the formulas through Calc (so the file stores them the
way Calc does), sizes every array formula to the result it gives, and saves the new workbook. The
formulas refer to the Responses sheet's range; nothing is pasted as a value. The reliability section
reads a sheet "Scale items" of formulas over the Responses sheet: the items grouped by the factor the
generator built them for (volunteer-survey-truth.json), reverse-keyed items reversed.

A function the installed extension does not offer (its computation not yet behind the C ABI) is
not entered; its place holds the text "LODE.X is not in this build of Lode yet". The test
tests/office/live_workbook_checks.py fails when such a function has since arrived, so the workbook
is regenerated rather than left behind.
"""

import argparse
import json
import os
import shutil
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
sys.path.insert(0, os.path.join(ROOT, "tests", "office"))

import uno  # noqa: E402,F401
from com.sun.star.beans import PropertyValue  # noqa: E402

from office import Office, address  # noqa: E402

SHEET = "Live analysis"
KEYED = "Scale items"  # the answers as scales read them: grouped by factor, reverse-keyed items reversed
MISSING = "{} is not in this build of Lode yet"
SEED = 2026
BOLD = 150.0  # com.sun.star.awt.FontWeight.BOLD


def prop(name, value):
    return PropertyValue(name, 0, value, 0)


def col_name(c):
    return address(c, 0)[:-1]


class Writer:
    def __init__(self, office, doc, sheet, available):
        self.office, self.doc, self.sheet, self.available = office, doc, sheet, available
        self.row = 0
        self.missing = []

    def cell(self, c, r):
        return self.sheet.getCellByPosition(c, r)

    def text(self, c, text, bold=False, italic=False, size=None):
        cell = self.cell(c, self.row)
        cell.setString(text)
        if bold:
            cell.CharWeight = BOLD
        if italic:
            cell.CharPosture = uno.Enum("com.sun.star.awt.FontSlant", "ITALIC")
        if size:
            cell.CharHeight = size
        return cell

    def line(self, *texts, bold=False, italic=False):
        for i, t in enumerate(texts):
            if t is not None:
                self.text(i, t, bold=bold, italic=italic)
        self.row += 1

    def heading(self, text):
        self.row += 1
        self.text(0, text, bold=True, size=13)
        self.row += 1

    def uses(self, *functions):
        """True if every function is offered; else writes the placeholder line and returns False."""
        gone = [f for f in functions if f not in self.available]
        for f in gone:
            self.text(1, MISSING.format(f), italic=True)
            self.row += 1
            self.missing.append(f)
        return not gone

    def formula(self, c, formula, fmt=None):
        cell = self.cell(c, self.row)
        with self.office.watchdog(300):
            cell.setFormula(formula)
        if fmt:
            cell.NumberFormat = fmt
        return cell

    def size(self, formula, max_rows, max_cols):
        """The size of an array formula's result: entered once over a generous scratch area far to the
        right (Calc shows #N/A beyond a result), measured, and removed."""
        c0 = 200
        with self.office.watchdog(600):
            probe = self.sheet.getCellRangeByPosition(c0, 0, c0 + max_cols - 1, max_rows - 1)
            probe.setArrayFormula(formula)
            self.doc.calculate()
            rows = cols = 0
            for i in range(max_rows):
                for j in range(max_cols):
                    if self.cell(c0 + j, i).getError() != 32767:  # 32767: #N/A, outside the result
                        rows, cols = max(rows, i + 1), max(cols, j + 1)
            probe.setArrayFormula("")
            probe.clearContents(1023)
        if rows == 0:
            raise RuntimeError(f"{formula} gave no result")
        return rows, cols

    def array(self, c, formula, max_rows, max_cols, fmt=None):
        """Enters an array formula at the current row, sized to its result. Returns (rows, cols)."""
        rows, cols = self.size(formula, max_rows, max_cols)
        with self.office.watchdog(600):
            block = self.sheet.getCellRangeByPosition(c, self.row, c + cols - 1, self.row + rows - 1)
            block.setArrayFormula(formula)
            if fmt:
                block.NumberFormat = fmt
        return rows, cols


def number_format(doc, code):
    formats = doc.NumberFormats
    locale = uno.createUnoStruct("com.sun.star.lang.Locale")
    key = formats.queryKey(code, locale, False)
    return key if key != -1 else formats.addNew(code, locale)


def keyed_sheet(doc, names, n, truth):
    """Adds the sheet KEYED: row 1 the item codes, then one row per volunteer, every cell a formula over
    the Responses sheet (empty where the answer is empty; reverse-keyed items reversed). Items are
    grouped by the factor the generator built them for, in the order of its factors. Returns the scales
    as (title, first column, last column, item codes)."""
    doc.Sheets.insertNewByName(KEYED, doc.Sheets.Count)
    sheet = doc.Sheets.getByName(KEYED)
    top = len(truth["categories"]) + 1
    order, scales = [], []
    for factor in truth["factors"]:
        items = [nm for nm in names if truth["intended_factor"].get(nm) == factor["code"]]
        if items:
            scales.append((factor["name"], col_name(len(order)), col_name(len(order) + len(items) - 1), items))
            order += items
    rows = [[f"=$Responses.{col_name(1 + names.index(nm))}$1" for nm in order]]
    for r in range(2, n + 2):
        row = []
        for nm in order:
            src = f"$Responses.{col_name(1 + names.index(nm))}{r}"
            value = f"{top}-{src}" if nm in truth["reverse_keyed"] else src
            row.append(f'=IF(ISBLANK({src});"";{value})')
        rows.append(row)
    sheet.getCellRangeByPosition(0, 0, len(order) - 1, n).setFormulaArray(tuple(tuple(r) for r in rows))
    sheet.Columns.getByIndex(0).Width = 1800
    return scales


def factorability_section(w, sheet, data, p, f3):
    """1. Do the items share enough to look for factors? KMO, Bartlett's test, each item's MSA."""
    w.heading("1. Do the items share enough to look for factors?")
    w.line("KMO compares the items' correlations with their partial correlations, from 0 to 1; Kaiser (1974) "
           "calls .90 and above marvelous, .80s meritorious, .70s middling, .60s mediocre, .50s miserable, "
           "below .50 unacceptable.", italic=True)
    kmo_cell = None
    w.text(0, "Kaiser-Meyer-Olkin (KMO), all items")
    if w.uses("LODE.KMO"):
        w.formula(1, f"=LODE.KMO({data})", f3)
        kmo_cell = address(1, w.row)
        w.formula(2, f'=IF({kmo_cell}>=0.9;"marvelous";IF({kmo_cell}>=0.8;"meritorious";IF({kmo_cell}>=0.7;'
                     f'"middling";IF({kmo_cell}>=0.6;"mediocre";IF({kmo_cell}>=0.5;"miserable";"unacceptable")))))')
        w.row += 1
    w.text(0, "Bartlett's test that the items are uncorrelated: chi-square, df, p")
    if w.uses("LODE.SPHERICITY"):
        w.array(1, f"=LODE.SPHERICITY({data})", 1, 3)
        w.row += 1
    w.line("A small p (say below .05) says the items are correlated; with hundreds of respondents it "
           "almost always is, so KMO says more.", italic=True)
    w.row += 1
    w.line("Each item's own sampling adequacy (MSA, read like KMO): an item below .50 shares too little "
           "with the others and is a candidate to drop (Kaiser 1974).", italic=True)
    if w.uses("LODE.MSA"):
        w.line("Item", "MSA", bold=True)
        for i in range(p):  # the item codes, read from the data's first row
            sheet.getCellByPosition(0, w.row + i).setFormula(f"=$Responses.{col_name(i + 1)}$1")
        w.array(1, f"=LODE.MSA({data})", p, 1, f3)
        w.row += p


def factor_count_section(w, sheet, data, p, f3):
    """2. How many factors? Parallel analysis; returns the cell of the suggested count (None without it)."""
    w.heading("2. How many factors?")
    w.line("Parallel analysis (Horn 1965): keep the factors whose eigenvalue beats the same position's "
           f"eigenvalue in random data of the same size (95th percentile, 500 random sets, seed {SEED}).",
           italic=True)
    k_cell = None
    w.text(0, "Suggested number of factors (parallel analysis)")
    if w.uses("LODE.NFACTORS"):
        w.formula(1, f'=LODE.NFACTORS({data};"parallel";{SEED})')
        k_cell = address(1, w.row)
        w.row += 1
    w.row += 1
    if "LODE.PARALLEL" in w.available:
        w.line("Position", "Observed eigenvalue", "Random data: mean", "Random data: 95th percentile", bold=True)
        for i in range(p):
            sheet.getCellByPosition(0, w.row + i).setValue(i + 1)
        w.array(1, f"=LODE.PARALLEL({data};500;95;{SEED})", p, 3, f3)
        w.row += p
    else:
        w.uses("LODE.PARALLEL")
        w.line("Position", "Observed eigenvalue", bold=True)
        if w.uses("LODE.EIGEN"):
            for i in range(p):
                sheet.getCellByPosition(0, w.row + i).setValue(i + 1)
            w.array(1, f"=LODE.EIGEN({data})", p, 1, f3)
            w.row += p
    return k_cell


def loadings_section(w, sheet, data, p, f2, factors_arg):
    """3. Which items belong to which factor? Returns the number of factor columns written (0 without)."""
    w.heading("3. Which items belong to which factor?")
    k = 0
    w.line("Loadings (the pattern matrix): how strongly each factor drives each answer. Common practice "
           "counts |loading| of .40 or more as salient; an item salient on two factors, or on none, deserves a look.",
           italic=True)
    w.line("Uniqueness: the share of an item's variance the factors leave unexplained; communality = 1 - "
           "uniqueness. Columns are sized for the factor count above when this sheet was made.", italic=True)
    if w.uses("LODE.LOADINGS"):
        loadings = f'=LODE.LOADINGS({data};{factors_arg};"minres";"oblimin")'
        _, k = w.size(loadings, p, p)
        extra = 1 + k
        w.text(0, "Item", bold=True)
        for j in range(k):
            w.text(1 + j, f"Factor {j + 1}", bold=True)
        w.text(extra, "Uniqueness", bold=True)
        w.text(extra + 1, "Communality", bold=True)
        w.row += 1
        for i in range(p):  # the item codes, read from the data's first row
            sheet.getCellByPosition(0, w.row + i).setFormula(f"=$Responses.{col_name(i + 1)}$1")
        w.array(1, loadings, p, k, f2)
        top = w.row
        w.row += p
        if w.uses("LODE.UNIQUENESS"):
            w.row, saved = top, w.row
            w.array(extra, f'=LODE.UNIQUENESS({data};{factors_arg};"minres";"oblimin")', p, 1, f2)
            w.row = saved
        if w.uses("LODE.COMMUNALITY"):
            w.row, saved = top, w.row
            w.array(extra + 1, f'=LODE.COMMUNALITY({data};{factors_arg};"minres";"oblimin")', p, 1, f2)
            w.row = saved
    return k


def reliability_section(w, doc, names, n, f2):
    """5. How consistent is each scale? Alpha and omega of each designed scale, reverse-keyed items reversed."""
    truth = json.load(open(os.path.join(HERE, "volunteer-survey-truth.json")))
    w.heading("5. How consistent is each scale?")
    w.line("Alpha and omega estimate how consistently a scale's items measure one thing; common practice "
           "reads .70 as adequate for group comparisons, .80 good, .90 needed before decisions about one "
           "person.", italic=True)
    reversed_items = [nm for nm in names if nm in truth["reverse_keyed"]]
    w.line(f"A scale is the items the survey was written to measure one factor with (the design, not the "
           f"loadings above). {' and '.join(reversed_items)} are worded the other way round (reverse keyed): "
           f"the sheet '{KEYED}' holds every answer as the scales read it, with those items reversed "
           f"({len(truth['categories']) + 1} minus the answer), and the formulas below read that sheet.",
           italic=True)
    w.line("Alpha: Cronbach's alpha from the item variances, standardised alpha from the correlations, the "
           "mean correlation between the items, and the volunteers who answered every item of the scale "
           "(alpha leaves the others out).", italic=True)
    w.line("Omega: McDonald's omega from a one-factor fit of the scale's items (each pair of items on the "
           "volunteers who answered both); it does not assume that every item measures the factor equally "
           "well.", italic=True)
    w.line("Scale", "Items", "Alpha", "Standardised alpha", "Mean inter-item r", "Volunteers used", "Omega",
           bold=True)
    alpha_ok = w.uses("LODE.ALPHA")
    omega_ok = w.uses("LODE.OMEGA")
    scales = keyed_sheet(doc, names, n, truth)
    for title, first, last_c, items in scales:
        rng = f"$'{KEYED}'.${first}$1:${last_c}${n + 1}"
        w.text(0, title)
        flagged = [it for it in items if it in truth["reverse_keyed"]]
        w.text(1, f"{items[0]} to {items[-1]}" + (f" ({', '.join(flagged)} reversed)" if flagged else ""))
        if alpha_ok:
            w.array(2, f"=LODE.ALPHA({rng})", 1, 4)
            for c, fmt in [(2, f2), (3, f2), (4, f2)]:
                w.cell(c, w.row).NumberFormat = fmt
        if omega_ok:
            w.formula(6, f"=LODE.OMEGA({rng})", f2)
        w.row += 1


def scores_section(office, w, sheet, data, factors_arg, k, f2):
    """6. Factor scores of the first ten volunteers, with the cautions beside them."""
    w.heading("6. Factor scores: the first ten volunteers")
    w.line("Each volunteer's estimated standing on each factor of the fit in section 3 (regression method, "
           "answers standardised). A volunteer who skipped some statements is scored from the ones answered "
           "when at least half were answered.", italic=True)
    w.line("Factor scores are estimates, not measurements: each score carries error, and other scoring "
           "methods give other scores. Before scores are used to select, rate or diagnose individuals, the "
           "questionnaire needs validation for that purpose; see below.", bold=True)
    if w.uses("LODE.SCORES") and k:
        scores = f'=LODE.SCORES({data};{factors_arg};"minres";"oblimin";"regression")'
        w.text(0, "Volunteer", bold=True)
        for j in range(k):
            w.text(1 + j, f"Factor {j + 1}", bold=True)
        w.row += 1
        shown = 10
        for i in range(shown):
            sheet.getCellByPosition(0, w.row + i).setFormula(f"=$Responses.$A{i + 2}")
        with office.watchdog(600):
            block = sheet.getCellRangeByPosition(1, w.row, k, w.row + shown - 1)
            block.setArrayFormula(scores)
            block.NumberFormat = f2
        w.row += shown


def build(office, doc, available):
    responses = doc.Sheets.getByName("Responses")
    cur = responses.createCursor()
    cur.gotoStartOfUsedArea(False)
    cur.gotoEndOfUsedArea(True)
    a = cur.RangeAddress
    names = [responses.getCellByPosition(c, 0).getString() for c in range(1, a.EndColumn + 1)]
    p, n = len(names), a.EndRow
    last = col_name(a.EndColumn)
    data = f"$Responses.$B$1:${last}${n + 1}"

    doc.Sheets.insertNewByName(SHEET, 0)
    sheet = doc.Sheets.getByName(SHEET)
    w = Writer(office, doc, sheet, available)
    f3 = number_format(doc, "0.000")
    f2 = number_format(doc, "0.00")

    w.text(0, "The volunteer survey, analysed live with Lode's cell functions", bold=True, size=15)
    w.row += 1
    w.line(f"Every number on this sheet is a formula over the answers on the Responses sheet ({data}: "
           f"the item codes in the first row, then one row per volunteer).")
    w.line("Correct an answer there and the results below follow. The formulas need the Lode extension "
           "(./lode install); the data are invented (see About).")
    w.line("Settings used throughout: Pearson correlations, each pair of items on the volunteers who "
           "answered both; minimum residual extraction, oblimin rotation.", italic=True)
    w.row += 1
    w.text(0, "Lode version")
    if w.uses("LODE.VERSION"):
        w.formula(1, "=LODE.VERSION()")
    w.row += 1

    factorability_section(w, sheet, data, p, f3)
    k_cell = factor_count_section(w, sheet, data, p, f3)
    factors_arg = k_cell or ""
    k = loadings_section(w, sheet, data, p, f2, factors_arg)

    # 4. Fit
    w.heading("4. How well do the factors reproduce the correlations?")
    w.line("RMSEA: below .05 close fit, up to .08 reasonable (Browne & Cudeck 1993); TLI of .95 or more is "
           "good (Hu & Bentler 1999); RMSR, the typical leftover correlation, small next to the correlations.",
           italic=True)
    w.line("The chi-square test assumes normally distributed answers; five-point answers are not, so read it "
           "loosely.", italic=True)
    if w.uses("LODE.FIT"):
        rows, _ = w.array(0, f'=LODE.FIT({data};{factors_arg};"minres";"oblimin")', 20, 2)
        w.row += rows

    reliability_section(w, doc, names, n, f2)
    scores_section(office, w, sheet, data, factors_arg, k, f2)

    # 7. The cautions
    w.heading("Before using scores about people")
    for t in ["Factor scores and scale scores are estimates with error, not measurements of a person.",
              "An instrument needs evidence of validity for the intended use before scores inform decisions "
              "about individuals (selection, rating, diagnosis).",
              "Professional testing standards and local law govern such use; follow them, and prefer group "
              "summaries where they serve."]:
        w.line(t)

    sheet.Columns.getByIndex(0).Width = 9000
    for c in range(1, 8):
        sheet.Columns.getByIndex(c).Width = 2600
    doc.CurrentController.setActiveSheet(sheet) if doc.CurrentController else None
    return w.missing


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--oxt", required=True)
    ap.add_argument("--out", default=os.path.join(HERE, "volunteer-survey-live.ods"))
    args = ap.parse_args()
    with Office(args.oxt) as office:
        tmp = tempfile.mkdtemp(prefix="lode-live-")
        try:
            src = os.path.join(tmp, "survey.ods")
            shutil.copy(os.path.join(HERE, "volunteer-survey.ods"), src)
            os.chmod(tmp, 0o777)
            os.chmod(src, 0o666)
            fd = office.smgr.createInstanceWithContext("com.sun.star.sheet.FunctionDescriptions", office.ctx)
            available = {dict((q.Name, q.Value) for q in fd.getByIndex(i))["Name"] for i in range(fd.getCount())}
            with office.watchdog(90):
                doc = office.desktop.loadComponentFromURL(uno.systemPathToFileUrl(src), "_blank", 0,
                                                          (prop("Hidden", True),))
            missing = build(office, doc, available)
            out = os.path.join(tmp, "live.ods")
            with office.watchdog(120):
                doc.calculateAll()
                doc.storeToURL(uno.systemPathToFileUrl(out), (prop("FilterName", "calc8"),))
                doc.close(True)
            shutil.copy(out, args.out)
        finally:
            shutil.rmtree(tmp, ignore_errors=True)
    print(f"wrote {os.path.relpath(args.out)}")
    if missing:
        print("not in this build of Lode yet, left as notes: " + ", ".join(missing))


if __name__ == "__main__":
    main()
