#!/usr/bin/python3
"""Generate Lode's demo survey: invented data from a known factor model.

The scenario is invented: the Tarnlow Trails Trust, a regional charity whose volunteers maintain
footpaths, hedgerows and small nature reserves, runs an annual volunteer experience survey of 30
statements answered on a five-point agreement scale. No real organisation, person or response is
behind any of it.

The data come from a common factor model with five correlated factors:
    y = Lambda f + e,   f ~ N(0, Phi),   e ~ N(0, diag(psi)),   psi = 1 - diag(Lambda Phi Lambda')
so every latent response has unit variance. Each latent response is cut at four thresholds into
the categories 1..5 (1 = strongly disagree ... 5 = strongly agree), then responses are removed:
a routing question sends some respondents past section D, some break off before section E, and
individual answers are skipped at random (a minority of respondents skip far more often than the
rest). Every random draw comes from numpy's PCG64 streams spawned from one seed, so the same seed
gives byte-identical CSV files (checked by tests/demo on Debian 12's numpy).

Written files (in --out, default: this script's folder):
    volunteer-survey-responses.csv   respondent id + 30 item columns, empty cell = no answer
    volunteer-survey-items.csv       item wording, intended scale, keying, design role, population
                                     loadings, uniqueness and thresholds
    volunteer-survey-truth.json      the whole population model and the missing-data design
    volunteer-survey.ods             workbook: sheets Responses, Items and About (skip with --no-ods)

Usage: example-sheets/generate_volunteer_survey.py [--seed N] [--out DIR] [--no-ods]
"""

import argparse
import csv
import io
import json
import os
import sys
import zipfile

import numpy as np

SEED = 20261201
N_RESPONDENTS = 420

# The five factors the instrument's designers intended, in questionnaire order.
FACTORS = [
    ("ROL", "Role clarity and preparation"),
    ("SUP", "Coordinator support"),
    ("TEM", "Team belonging"),
    ("SAF", "Safety and equipment"),
    ("VAL", "Feeling valued"),
]

# Population factor correlations (order as FACTORS).
PHI = np.array([
    #  ROL   SUP   TEM   SAF   VAL
    [1.00, 0.45, 0.30, 0.40, 0.35],  # ROL
    [0.45, 1.00, 0.35, 0.25, 0.50],  # SUP
    [0.30, 0.35, 1.00, 0.15, 0.45],  # TEM
    [0.40, 0.25, 0.15, 1.00, 0.20],  # SAF
    [0.35, 0.50, 0.45, 0.20, 1.00],  # VAL
])

# Questionnaire sections; each holds the items written for one intended scale.
SECTIONS = [
    ("A", "Your role", "ROL"),
    ("B", "Your coordinator", "SUP"),
    ("C", "Your work party", "TEM"),
    ("D", "Task days: safety and equipment", "SAF"),
    ("E", "Being part of the trust", "VAL"),
]

# Items: code, wording, reverse keyed, design role, population loadings {factor: loading} for the
# response as worded (a reverse-keyed item loads negatively on its factor; scoring it 6 - x flips
# the sign). Design roles: "regular", "weak" (little common variance), "cross" (two loadings).
ITEMS = [
    ("ROL1", "I know what is expected of me on a task day.", False, "regular", {"ROL": 0.72}),
    ("ROL2", "I understand how my tasks fit into the plans for each site.", False, "regular", {"ROL": 0.60}),
    ("ROL3", "My induction prepared me well for my first task days.", False, "regular", {"ROL": 0.65}),
    ("ROL4", "I am often unsure what I should be doing when I arrive at a site.", True, "regular", {"ROL": -0.62}),
    ("ROL5", "Task briefings give me the information I need.", False, "regular", {"ROL": 0.70}),
    ("ROL6", "I have been trained to use the tools I am given safely.", False, "cross", {"ROL": 0.42, "SAF": 0.40}),
    ("SUP1", "My coordinator is easy to reach when I have a question.", False, "regular", {"SUP": 0.70}),
    ("SUP2", "My coordinator listens to my suggestions.", False, "regular", {"SUP": 0.75}),
    ("SUP3", "My coordinator gives me useful feedback on my work.", False, "regular", {"SUP": 0.66}),
    ("SUP4", "I can raise a concern with my coordinator without worrying about it.", False, "regular", {"SUP": 0.68}),
    ("SUP5", "My coordinator treats all volunteers fairly.", False, "regular", {"SUP": 0.62}),
    ("SUP6", "My coordinator thanks volunteers for the effort they put in.", False, "cross", {"SUP": 0.45, "VAL": 0.38}),
    ("TEM1", "I feel part of my work party.", False, "regular", {"TEM": 0.78}),
    ("TEM2", "Members of my work party help each other out.", False, "regular", {"TEM": 0.66}),
    ("TEM3", "I have made friends through volunteering with the trust.", False, "regular", {"TEM": 0.58}),
    ("TEM4", "I sometimes feel like an outsider in my work party.", True, "regular", {"TEM": -0.60}),
    ("TEM5", "New volunteers are made welcome in my work party.", False, "regular", {"TEM": 0.64}),
    ("TEM6", "I look forward to seeing the others on task days.", False, "regular", {"TEM": 0.70}),
    ("SAF1", "The tools I am given are in good working order.", False, "regular", {"SAF": 0.66}),
    ("SAF2", "Protective equipment is available whenever I need it.", False, "regular", {"SAF": 0.70}),
    ("SAF3", "Risks are explained before work starts on a site.", False, "regular", {"SAF": 0.68}),
    ("SAF4", "I would feel comfortable stopping a task I thought was unsafe.", False, "regular", {"SAF": 0.55}),
    ("SAF5", "First aid cover is in place on every task day.", False, "regular", {"SAF": 0.62}),
    ("SAF6", "Task sites are easy for me to get to.", False, "weak", {"SAF": 0.28}),
    ("VAL1", "The trust recognises what volunteers contribute.", False, "regular", {"VAL": 0.74}),
    ("VAL2", "I can see the difference my work makes to the countryside.", False, "regular", {"VAL": 0.62}),
    ("VAL3", "I am proud to tell people I volunteer with the trust.", False, "regular", {"VAL": 0.70}),
    ("VAL4", "The trust keeps volunteers informed about decisions that affect them.", False, "regular", {"VAL": 0.58}),
    ("VAL5", "I would recommend volunteering with the trust to a friend.", False, "regular", {"VAL": 0.72}),
    ("VAL6", "The volunteer newsletter is worth reading.", False, "weak", {"VAL": 0.30}),
]

CATEGORIES = ["Strongly disagree", "Disagree", "Neither agree nor disagree", "Agree", "Strongly agree"]

# Thresholds on the latent scale. Agreement surveys lean towards agreement: the base cut points
# give about 4 / 10 / 20 / 42 / 24 per cent in the five categories for a positively worded item
# (common practice, not a published norm); reverse-keyed items get the mirrored cut points (most
# people disagree with them). Each item's cut points are shifted by its own draw from U(-0.35, 0.35).
BASE_THRESHOLDS = np.array([-1.75, -1.08, -0.41, 0.71])
THRESHOLD_SHIFT = 0.35

# Missing-data design.
ROUTED_PAST_D = 0.07      # share told by the routing question to skip section D (no outdoor task day)
BREAK_OFF_BEFORE_E = 0.04  # share who stop answering before section E
OCCASIONAL_SKIPPERS = 0.25  # share of respondents who skip items noticeably often ...
SKIP_RATE_OCCASIONAL = 0.07  # ... with this chance per item,
SKIP_RATE_OTHERS = 0.004     # the others with this one.


def factor_index():
    return {code: k for k, (code, _) in enumerate(FACTORS)}


def loading_matrix():
    idx = factor_index()
    lam = np.zeros((len(ITEMS), len(FACTORS)))
    for i, item in enumerate(ITEMS):
        for f, value in item[4].items():
            lam[i, idx[f]] = value
    return lam


def population_model():
    lam = loading_matrix()
    communality = np.einsum("ij,jk,ik->i", lam, PHI, lam)
    if np.any(communality >= 1.0):
        raise ValueError("the loadings give a communality of 1 or more")
    psi = 1.0 - communality
    latent_corr = lam @ PHI @ lam.T + np.diag(psi)
    return lam, psi, latent_corr


def generate(seed):
    """Returns (responses with NaN for missing, thresholds, respondent ids, design dict)."""
    lam, psi, _ = population_model()
    p, m = lam.shape
    streams = [np.random.Generator(np.random.PCG64(s)) for s in np.random.SeedSequence(seed).spawn(3)]
    rng_thresholds, rng_latent, rng_missing = streams

    # 1. Item thresholds.
    thresholds = np.empty((p, 4))
    for i, item in enumerate(ITEMS):
        base = -BASE_THRESHOLDS[::-1] if item[2] else BASE_THRESHOLDS
        thresholds[i] = base + rng_thresholds.uniform(-THRESHOLD_SHIFT, THRESHOLD_SHIFT)

    # 2. Latent responses from the factor model.
    n = N_RESPONDENTS
    chol = np.linalg.cholesky(PHI)
    factors = rng_latent.standard_normal((n, m)) @ chol.T
    errors = rng_latent.standard_normal((n, p)) * np.sqrt(psi)
    latent = factors @ lam.T + errors

    # 3. Five categories: 1 + the number of thresholds below the latent response.
    responses = 1.0 + (latent[:, :, None] > thresholds[None, :, :]).sum(axis=2)

    # 4. Missing responses.
    section_of = np.array([item[0][:3] for item in ITEMS])
    routed = rng_missing.random(n) < ROUTED_PAST_D
    broke_off = rng_missing.random(n) < BREAK_OFF_BEFORE_E
    skip_rate = np.where(rng_missing.random(n) < OCCASIONAL_SKIPPERS, SKIP_RATE_OCCASIONAL, SKIP_RATE_OTHERS)
    skipped = rng_missing.random((n, p)) < skip_rate[:, None]
    missing = skipped.copy()
    missing[np.ix_(routed, section_of == "SAF")] = True
    missing[np.ix_(broke_off, section_of == "VAL")] = True
    responses[missing] = np.nan

    ids = [f"V{1000 + r + 1:04d}" for r in range(n)]
    design = {
        "routed_past_section_D": int(routed.sum()),
        "broke_off_before_section_E": int(broke_off.sum()),
        "occasional_skippers": int((skip_rate == SKIP_RATE_OCCASIONAL).sum()),
    }
    return responses, thresholds, ids, design


def csv_text(rows):
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerows(rows)
    return buf.getvalue()


def responses_rows(responses, ids):
    rows = [["respondent"] + [item[0] for item in ITEMS]]
    for rid, row in zip(ids, responses):
        rows.append([rid] + ["" if np.isnan(v) else str(int(v)) for v in row])
    return rows


def scale_name(code):
    return dict(FACTORS)[code]


def items_rows(lam, psi, thresholds):
    section = {scale: letter for letter, _, scale in SECTIONS}
    head = (["code", "section", "wording", "intended_scale", "reverse_keyed", "design"]
            + [f"loading_{code}" for code, _ in FACTORS] + ["uniqueness"]
            + [f"threshold_{k}" for k in range(1, 5)])
    rows = [head]
    for i, (code, wording, reverse, role, _) in enumerate(ITEMS):
        scale = code[:3]
        rows.append([code, section[scale], wording, scale_name(scale), "yes" if reverse else "no", role]
                    + [f"{v:.2f}" for v in lam[i]] + [f"{psi[i]:.4f}"]
                    + [f"{t:.4f}" for t in thresholds[i]])
    return rows


def truth_document(seed, lam, psi, latent_corr, thresholds, design, responses):
    codes = [item[0] for item in ITEMS]
    r4 = lambda a: [[round(float(v), 4) for v in row] for row in a]
    return {
        "scenario": "Tarnlow Trails Trust annual volunteer experience survey (invented data)",
        "seed": seed,
        "respondents": N_RESPONDENTS,
        "items": codes,
        "factors": [{"code": c, "name": n} for c, n in FACTORS],
        "categories": CATEGORIES,
        "model": "y = Lambda f + e, f ~ N(0, Phi), e ~ N(0, diag(psi)), unit-variance latent responses "
                 "cut at four thresholds into categories 1..5",
        "population_loadings": r4(lam),
        "factor_correlations": r4(PHI),
        "uniquenesses": [round(float(v), 4) for v in psi],
        "latent_correlations": r4(latent_corr),
        "thresholds": r4(thresholds),
        "intended_factor": {item[0]: item[0][:3] for item in ITEMS},
        "reverse_keyed": [item[0] for item in ITEMS if item[2]],
        "weak_items": [item[0] for item in ITEMS if item[3] == "weak"],
        "cross_loading_items": {item[0]: sorted(item[4]) for item in ITEMS if item[3] == "cross"},
        "missing_design": {
            "routing": f"section D (SAF items) skipped by about {ROUTED_PAST_D:.0%} (no outdoor task day)",
            "break_off": f"section E (VAL items) unanswered by about {BREAK_OFF_BEFORE_E:.0%}",
            "item_skips": f"{OCCASIONAL_SKIPPERS:.0%} of respondents skip each item with chance "
                          f"{SKIP_RATE_OCCASIONAL}, the rest with chance {SKIP_RATE_OTHERS}",
            "expected_missing_share_range": [0.02, 0.07],
            "realised": dict(design,
                             missing_share=round(float(np.isnan(responses).mean()), 4),
                             complete_cases=int((~np.isnan(responses).any(axis=1)).sum())),
        },
    }


# ---------------------------------------------------------------------------------------------
# The workbook (.ods), written with odfpy (Debian's python3-odf) and re-packed with fixed zip
# timestamps so that regenerating it does not change the file.

ABOUT_LINES = [
    "Tarnlow Trails Trust volunteer survey (invented demo data)",
    "",
    "The trust, its volunteers and every response in this workbook are invented. They were generated "
    "from a known factor model so that an analysis can be checked against the structure put in.",
    "Scenario: a regional charity whose volunteers maintain footpaths, hedgerows and small nature "
    "reserves asks its volunteers to rate 30 statements about their experience.",
    "Answer scale: 1 = Strongly disagree, 2 = Disagree, 3 = Neither agree nor disagree, "
    "4 = Agree, 5 = Strongly agree. An empty cell means no answer.",
    "Sections: A Your role, B Your coordinator, C Your work party, D Task days: safety and equipment "
    "(skipped by those who attended no outdoor task day), E Being part of the trust.",
    "Reverse-keyed statements (agreement means a worse experience): ROL4, TEM4. "
    "Score them as 6 minus the answer before adding them into a scale score.",
    "Sheet Responses: one row per respondent. Sheet Items: the wording of each statement and the "
    "scale it was written for.",
    "Regenerate: example-sheets/generate_volunteer_survey.py (seed {seed}); the true structure is "
    "in volunteer-survey-truth.json beside this workbook.",
]


def write_ods(path, responses_table, items_table, seed):
    from odf.opendocument import OpenDocumentSpreadsheet
    from odf.style import (ParagraphProperties, Style, TableCellProperties, TableColumnProperties,
                           TextProperties)
    from odf.table import Table, TableCell, TableColumn, TableRow
    from odf.text import P

    doc = OpenDocumentSpreadsheet()
    bold = Style(name="LodeHeader", family="table-cell")
    bold.addElement(TextProperties(fontweight="bold"))
    bold.addElement(ParagraphProperties(textalign="start"))
    doc.automaticstyles.addElement(bold)
    title = Style(name="LodeTitle", family="table-cell")
    title.addElement(TextProperties(fontweight="bold", fontsize="13pt"))
    doc.automaticstyles.addElement(title)
    wrapped = Style(name="LodeWrapped", family="table-cell")
    wrapped.addElement(TableCellProperties(wrapoption="wrap", verticalalign="top"))
    doc.automaticstyles.addElement(wrapped)
    widths = {}

    def column_style(width):
        if width not in widths:
            st = Style(name=f"LodeCol{len(widths) + 1}", family="table-column")
            st.addElement(TableColumnProperties(columnwidth=width))
            doc.automaticstyles.addElement(st)
            widths[width] = st
        return widths[width]

    def add_sheet(name, rows, col_widths, header=True, numeric_from=None, wrap_columns=()):
        table = Table(name=name)
        for w in col_widths:
            table.addElement(TableColumn(stylename=column_style(w)))
        for r, row in enumerate(rows):
            tr = TableRow()
            for c, value in enumerate(row):
                is_head = header and r == 0
                numeric = (not is_head and numeric_from is not None and c >= numeric_from and value != "")
                if value == "":
                    tr.addElement(TableCell())
                elif numeric:
                    cell = TableCell(valuetype="float", value=value)
                    cell.addElement(P(text=value))
                    tr.addElement(cell)
                else:
                    style = bold if is_head else (wrapped if c in wrap_columns else None)
                    cell = TableCell(valuetype="string", stylename=style)
                    cell.addElement(P(text=value))
                    tr.addElement(cell)
            table.addElement(tr)
        doc.spreadsheet.addElement(table)

    add_sheet("Responses", responses_table, ["2.2cm"] + ["1.3cm"] * len(ITEMS), numeric_from=1)
    items_sheet = [["Code", "Section", "Statement", "Intended scale", "Reverse keyed"]]
    section_name = {letter: f"{letter} {name}" for letter, name, _ in SECTIONS}
    for row in items_table[1:]:
        items_sheet.append([row[0], section_name[row[1]], row[2], row[3], row[4]])
    add_sheet("Items", items_sheet, ["1.6cm", "6.6cm", "12.5cm", "5.4cm", "2.6cm"], wrap_columns=(2,))

    about = Table(name="About")
    about.addElement(TableColumn(stylename=column_style("17cm")))
    for k, line in enumerate(ABOUT_LINES):
        tr = TableRow()
        text = line.format(seed=seed)
        if text:
            cell = TableCell(valuetype="string", stylename=title if k == 0 else wrapped)
            cell.addElement(P(text=text))
        else:
            cell = TableCell()
        tr.addElement(cell)
        about.addElement(tr)
    doc.spreadsheet.addElement(about)

    raw = io.BytesIO()
    doc.write(raw)
    repack_deterministically(raw.getvalue(), path)


def repack_deterministically(data, path):
    """Rewrites a zip package with fixed timestamps, the mimetype entry first and stored."""
    src = zipfile.ZipFile(io.BytesIO(data))
    names = src.namelist()
    ordered = ["mimetype"] + sorted(n for n in names if n != "mimetype")
    with zipfile.ZipFile(path, "w") as out:
        for name in ordered:
            info = zipfile.ZipInfo(name, date_time=(2026, 1, 1, 0, 0, 0))
            info.compress_type = zipfile.ZIP_STORED if name == "mimetype" else zipfile.ZIP_DEFLATED
            info.external_attr = 0o644 << 16
            out.writestr(info, src.read(name))


def write_text(path, text):
    with open(path, "w", encoding="utf-8", newline="") as f:
        f.write(text)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--seed", type=int, default=SEED)
    parser.add_argument("--out", default=os.path.dirname(os.path.abspath(__file__)))
    parser.add_argument("--no-ods", action="store_true", help="write the CSV and JSON files only")
    args = parser.parse_args(argv)

    lam, psi, latent_corr = population_model()
    np.linalg.cholesky(latent_corr)  # the implied latent correlation matrix must be positive definite
    responses, thresholds, ids, design = generate(args.seed)

    os.makedirs(args.out, exist_ok=True)
    resp_rows = responses_rows(responses, ids)
    item_rows = items_rows(lam, psi, thresholds)
    write_text(os.path.join(args.out, "volunteer-survey-responses.csv"), csv_text(resp_rows))
    write_text(os.path.join(args.out, "volunteer-survey-items.csv"), csv_text(item_rows))
    truth = truth_document(args.seed, lam, psi, latent_corr, thresholds, design, responses)
    write_text(os.path.join(args.out, "volunteer-survey-truth.json"), json.dumps(truth, indent=1) + "\n")
    if not args.no_ods:
        write_ods(os.path.join(args.out, "volunteer-survey.ods"), resp_rows, item_rows, args.seed)

    real = truth["missing_design"]["realised"]
    print(f"{N_RESPONDENTS} respondents x {len(ITEMS)} items, seed {args.seed}: "
          f"{real['missing_share']:.1%} of answers missing, {real['complete_cases']} complete cases; "
          f"written to {args.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
