#!/usr/bin/python3
"""The end-to-end demo behind `./lode demo`: the analysis dialog's report service on the demo survey.

    run_demo.py --oxt build/app/office-addin/lode.oxt --library build/app/capi/liblode.so
                --out build/demo

Runs under Debian's /usr/bin/python3 (python3-uno) with URE_MORE_TYPES naming the report service's
type library (./lode sets it). Steps, each announced as it starts:
  1. a headless LibreOffice with a throwaway profile and the built lode.oxt installed in it (the
     office tests' harness, tests/office/office.py);
  2. a copy of example-sheets/volunteer-survey.ods in OUT (the committed file is never opened for
     writing), on whose Responses sheet the report service org.lode.calc.AnalysisReport runs, the
     same service the dialog's Run button starts;
  3. the result workbook saved in OUT, and a copy holding only the report sheets, each fitted to the
     page width, exported to PDF by `soffice --convert-to pdf` (another throwaway profile) and to one
     PNG per page by pdftoppm;
  4. a short summary read back from the report sheets (the factor-count decision, fit, the items to
     look at), with the report's largest eigenvalue checked against the C library (Python binding).
Exits non-zero on any failure, naming it.
"""

import argparse
import glob
import os
import shutil
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
sys.path.insert(0, os.path.join(ROOT, "tests", "office"))
sys.path.insert(0, os.path.join(ROOT, "capi", "python"))

import numpy as np  # noqa: E402
import uno  # noqa: E402,F401  (Debian's python3-uno)
from com.sun.star.beans import PropertyValue  # noqa: E402

from office import SOFFICE, Office  # noqa: E402  (the office tests' harness)

WORKBOOK = os.path.join(HERE, "volunteer-survey.ods")
RESULT = "volunteer-survey-analysed.ods"
REPORT_ONLY = "volunteer-survey-report.ods"
SEED = 20261201  # the run's random seed, written into the run record
BOOTSTRAP = 200  # resamples behind the bootstrap intervals of the loadings and factor correlations
SCORES_SHEET = "Lode scores"  # the factor scores' own sheet (kept out of the PDF)


def say(msg):
    print(f"\033[1m[lode demo]\033[0m {msg}", flush=True)


class DemoError(Exception):
    pass


def prop(name, value):
    return PropertyValue(name, 0, value, 0)


def used_rows(sheet):
    """Every used cell of a sheet: rows of values (float, str or None)."""
    cur = sheet.createCursor()
    cur.gotoStartOfUsedArea(False)
    cur.gotoEndOfUsedArea(True)
    a = cur.RangeAddress
    out = []
    for r in range(0, a.EndRow + 1):
        row = []
        for c in range(0, a.EndColumn + 1):
            cell = sheet.getCellByPosition(c, r)
            t = cell.Type.value
            if t == "EMPTY":
                row.append(None)
            elif t == "TEXT" or (t == "FORMULA" and cell.FormulaResultType2 == 2):
                row.append(cell.String)
            else:
                row.append(cell.Value)
        while row and row[-1] is None:
            row.pop()
        out.append(row)
    return out


def sections(rows, headings):
    """Splits an overview's rows into {heading: [rows under it]} for the headings given."""
    out, current = {}, None
    for r in rows:
        if r and isinstance(r[0], str) and r[0] in headings:
            current = r[0]
            out[current] = []
        elif current is not None and r:
            out[current].append(r)
    return out


def show(value, label=""):
    if isinstance(value, float):
        if value == 0 and "p-value" in label:
            return "below 1e-300"  # the chi-square's tail underflows a double
        if value == int(value):
            return f"{value:g}"
        return f"{value:.2e}" if abs(value) < 0.001 else f"{value:.3f}"
    return str(value)


def responses_values(doc):
    """The Responses sheet's answers as the report service read them: item names and values (NaN = empty)."""
    sheet = doc.Sheets.getByName("Responses")
    cur = sheet.createCursor()
    cur.gotoStartOfUsedArea(False)
    cur.gotoEndOfUsedArea(True)
    a = cur.RangeAddress
    rows = sheet.getCellRangeByPosition(1, 0, a.EndColumn, a.EndRow).getDataArray()
    names = list(rows[0])
    x = np.array([[v if isinstance(v, float) else np.nan for v in r] for r in rows[1:]])
    return names, x


def run_report(office, out_dir):
    result = os.path.join(out_dir, RESULT)
    shutil.copy(WORKBOOK, result)
    os.chmod(result, 0o666)
    say(f"opening a copy of example-sheets/{os.path.basename(WORKBOOK)} ({os.path.relpath(result)})")
    with office.watchdog(90):
        doc = office.desktop.loadComponentFromURL(uno.systemPathToFileUrl(os.path.abspath(result)), "_blank", 0,
                                                  (prop("Hidden", True),))
    if doc is None:
        raise DemoError(f"LibreOffice could not open {result}")
    before = list(doc.Sheets.ElementNames)
    sheet = doc.Sheets.getByName("Responses")
    cur = sheet.createCursor()
    cur.gotoStartOfUsedArea(False)
    cur.gotoEndOfUsedArea(True)
    src = cur.RangeAddress
    service = office.smgr.createInstanceWithContext("org.lode.calc.AnalysisReport", office.ctx)
    if service is None:
        raise DemoError("the installed extension does not provide org.lode.calc.AnalysisReport")
    options = (prop("Correlation", "pearson"), prop("Missing", "pairwise"), prop("Factors", 0),
               prop("Extraction", "minres"), prop("Rotation", "oblimin"), prop("Salient", 0.40),
               prop("Seed", SEED), prop("Scores", "regression"), prop("ScoresPlace", "sheet"),
               prop("Bootstrap", BOOTSTRAP))
    say("running the report service (org.lode.calc.AnalysisReport, what the dialog's Run button starts) on "
        f"Responses, {src.EndRow} respondents x {src.EndColumn} items: Pearson correlations, pairwise missing, "
        f"factor count suggested from the data, minres, oblimin, strong loadings from 0.40, regression factor "
        f"scores on a sheet of their own, bootstrap intervals from {BOOTSTRAP} resamples, seed {SEED}")
    t0 = time.monotonic()
    with office.watchdog(300):
        said = service.run(doc, src, options)
    say(f"the service answered in {time.monotonic() - t0:.1f} s: {said}")
    report_sheets = [n for n in doc.Sheets.ElementNames if n not in before]
    if not report_sheets:
        raise DemoError("the report service wrote no sheets")
    with office.watchdog(120):
        doc.store()
    say(f"saved the workbook with the report: {os.path.relpath(result)}")

    summary = read_summary(doc, report_sheets)
    summary["answers"] = responses_values(doc)

    # The report alone, each sheet fitted to the page width, for the PDF; the factor scores (one row per
    # respondent) stay in the workbook only.
    report_sheets = [n for n in report_sheets if not n.startswith(SCORES_SHEET)]
    for name in list(doc.Sheets.ElementNames):
        if name not in report_sheets:
            doc.Sheets.removeByName(name)
    styles = doc.StyleFamilies.getByName("PageStyles")
    for i, name in enumerate(report_sheets):
        sheet = doc.Sheets.getByName(name)
        cur = sheet.createCursor()
        cur.gotoEndOfUsedArea(False)
        style_name = f"Lode demo page {i + 1}"
        style = doc.createInstance("com.sun.star.style.PageStyle")
        styles.insertByName(style_name, style)
        style = styles.getByName(style_name)
        style.ScaleToPagesX = 1
        style.ScaleToPagesY = 0  # as many pages down as needed
        if cur.RangeAddress.EndColumn > 8:  # a wide sheet (the item correlations) goes landscape
            w, h = style.Width, style.Height
            style.IsLandscape = True
            style.Width, style.Height = max(w, h), min(w, h)
        else:
            wrap_long_notes(sheet, cur.RangeAddress, style.Width - style.LeftMargin - style.RightMargin)
        sheet.PageStyle = style_name
    report_only = os.path.join(out_dir, REPORT_ONLY)
    with office.watchdog(120):
        doc.storeToURL(uno.systemPathToFileUrl(os.path.abspath(report_only)), (prop("FilterName", "calc8"),))
        doc.close(True)
    return result, report_only, summary


def wrap_long_notes(sheet, area, page_width):
    """For the printed copy only: a long note that spills over empty cells to its right is wrapped in
    a merged block that ends at the page's right edge, so fitting the page width does not shrink
    the whole sheet to fit one long line."""
    widths = [sheet.Columns.getByIndex(c).Width for c in range(area.EndColumn + 30)]
    for r in range(area.EndRow + 1):
        for c in range(area.EndColumn + 1):
            cell = sheet.getCellByPosition(c, r)
            if cell.Type.value != "TEXT" or len(cell.String) < 60:
                continue
            left = sum(widths[:c])
            end, width = c, widths[c]
            while (end + 1 < len(widths) and left + width + widths[end + 1] <= page_width
                   and sheet.getCellByPosition(end + 1, r).Type.value == "EMPTY"):
                end += 1
                width += widths[end]
            block = sheet.getCellRangeByPosition(c, r, end, r)
            if end > c:
                block.merge(True)
            block.IsTextWrapped = True
            sheet.Rows.getByIndex(r).OptimalHeight = True
            break


def read_summary(doc, report_sheets):
    overview = used_rows(doc.Sheets.getByName(report_sheets[0]))
    heads = ["Can these items be factored?", "How many factors", "How well the model fits", "Items to look at",
             "Factor scores", "Bootstrap intervals"]
    parts = sections(overview, set(heads) | {"Before using factor scores about people", "Data used"})
    data = {r[0]: r[1] for r in parts.get("Data used", []) if len(r) > 1}
    lines = []
    if data:
        lines.append(f"data: {show(data.get('Items analysed', '?'))} items, "
                     f"{show(data.get('Respondents used', '?'))} of {show(data.get('Respondents in the range', '?'))} "
                     f"respondents used, {100 * data.get('Share of answers missing', float('nan')):.1f}% of answers "
                     "missing")
    for h in heads:
        rows = parts.get(h)
        if rows is None:
            lines.append(f"{h}: (not in this report)")
            continue
        lines.append(h)
        for r in rows:
            if h == "How many factors" and r[0] != "Decision":
                continue  # the evidence (eigenvalues, each rule's count) is on the sheet; the summary keeps the decision
            if str(r[0]).startswith("Note on the"):
                continue  # the sheet keeps the notes; the summary keeps the figures and the cautions
            cells = [show(v, str(r[0])) for v in r if v is not None]
            lines.append("    " + ": ".join([cells[0], "  ".join(cells[1:])]) if len(cells) > 1 else "    " + cells[0])
    # Reliability of each factor's scale, from the factors sheet (its header row starts with "Scale").
    factors_sheet = [n for n in report_sheets if n.startswith("Lode factors")]
    if factors_sheet:
        rows = used_rows(doc.Sheets.getByName(factors_sheet[0]))
        at = [i for i, r in enumerate(rows) if r[:3] == ["Scale", "Items", "Alpha"]]
        if at:
            lines.append("Reliability of each factor's scale (alpha, omega)")
            for r in rows[at[0] + 1:]:
                if not r or not isinstance(r[0], str) or not r[0].startswith("Factor"):
                    break
                lines.append(f"    {r[0]}: {show(r[1])} items, alpha {show(r[2])}, omega {show(r[4])}")
    # The first observed eigenvalue, read from the overview, against the C library on the same cells.
    factor_rows = [r for r in overview if len(r) > 1 and r[0] == 1.0 and isinstance(r[1], float)]
    return {"lines": lines, "first_eigenvalue": factor_rows[0][1] if factor_rows else None,
            "sheets": report_sheets}


def check_against_library(summary):
    import lode  # the C library through its Python binding (LODE_LIBRARY)
    names, x = summary["answers"]
    ref = lode.correlation(x, method="pearson", missing="pairwise", item_names=names)
    got = summary["first_eigenvalue"]
    if got is None:
        raise DemoError("the overview has no eigenvalue table")
    if abs(got - ref.eigenvalues[0]) > 1e-9:
        raise DemoError(f"the report's largest eigenvalue {got} differs from the C library's {ref.eigenvalues[0]}")
    return ref


def export_pdf_png(report_only, out_dir):
    say("exporting the report sheets to PDF (soffice --convert-to pdf, throwaway profile)")
    tmp = tempfile.mkdtemp(prefix="lode-demo-pdf-")
    try:
        env = dict(os.environ, HOME=tmp, SAL_USE_VCLPLUGIN="svp")
        env.pop("DISPLAY", None)
        cmd = [SOFFICE, "--headless", "--norestore", "--nolockcheck",
               "-env:UserInstallation=" + uno.systemPathToFileUrl(os.path.join(tmp, "profile")),
               "--convert-to", "pdf", "--outdir", out_dir, report_only]
        proc = subprocess.run(cmd, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True, timeout=180,
                              env=env, start_new_session=True)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    pdf = os.path.splitext(os.path.join(out_dir, os.path.basename(report_only)))[0] + ".pdf"
    if proc.returncode != 0 or not os.path.exists(pdf):
        raise DemoError(f"soffice --convert-to pdf failed ({proc.returncode}): {proc.stdout.strip()}")
    say("rendering each page to PNG (pdftoppm)")
    stem = os.path.join(out_dir, "volunteer-survey-report-page")
    for old in glob.glob(stem + "-*.png"):
        os.remove(old)
    subprocess.run(["pdftoppm", "-png", "-r", "110", pdf, stem], check=True, timeout=120)
    pngs = sorted(glob.glob(stem + "-*.png"))
    if not pngs:
        raise DemoError("pdftoppm wrote no pages")
    return pdf, pngs


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--oxt", required=True)
    ap.add_argument("--library", required=True, help="liblode.so (for the check against the C library)")
    ap.add_argument("--out", required=True)
    args = ap.parse_args()
    os.environ["LODE_LIBRARY"] = os.path.abspath(args.library)
    out_dir = os.path.abspath(args.out)
    os.makedirs(out_dir, exist_ok=True)
    if not os.environ.get("URE_MORE_TYPES"):
        raise DemoError("URE_MORE_TYPES must name the report service's type library (./lode demo sets it)")
    t0 = time.monotonic()
    say("starting a headless LibreOffice with a throwaway profile and installing lode.oxt into it")
    with Office(args.oxt) as office:
        say(f"LibreOffice is up ({office.timings.get('profile_and_install_s', 0):.0f} s to prepare the profile "
            f"and install, {office.timings.get('start_to_connect_s', 0):.0f} s to start)")
        result, report_only, summary = run_report(office, out_dir)
    say("stopped that LibreOffice; checking the report against the C library")
    ref = check_against_library(summary)
    pdf, pngs = export_pdf_png(report_only, out_dir)

    print()
    print("Lode on the Tarnlow Trails Trust volunteer survey (invented demo data)")
    for line in summary["lines"]:
        print("  " + line)
    print(f"  C library check: the largest eigenvalue {summary['first_eigenvalue']:.6f} matches liblode "
          f"{ref.eigenvalues[0]:.6f} on the same answers")
    print()
    print("Written:")
    print(f"  workbook with the report   {os.path.relpath(result)}  (sheets: {', '.join(summary['sheets'])})")
    print(f"  the report sheets alone    {os.path.relpath(report_only)}")
    print(f"  PDF                        {os.path.relpath(pdf)}")
    print(f"  PNG, one per page          {', '.join(os.path.relpath(p) for p in pngs)}")
    print(f"Done in {time.monotonic() - t0:.0f} s.")


if __name__ == "__main__":
    try:
        main()
    except DemoError as e:
        print(f"[lode demo] error: {e}", file=sys.stderr)
        sys.exit(1)
