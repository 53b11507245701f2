"""The report service with its two checks of the structure (options Halves and Holdout) on R's
datasets::attitude (Chatterjee and Price 1977; 30 departments x 7 ratings) in a real headless
LibreOffice: each writes a sheet of its own whose figures equal the C library's on the same data (its
Python binding), whose readings follow the published cut-offs (0.85 and 0.95, Lorenzo-Seva & ten Berge
2006; CFI and TLI at least 0.95, RMSEA at most 0.06, SRMR at most 0.08, Hu & Bentler 1999; decided
here from the library's numbers) and which carries the caution. A hold-out too small to fit is refused
by name with the workable shares, the workbook left as it was.

Run by ctest as part of office_report (tests/office/CMakeLists.txt), with URE_MORE_TYPES set.
"""

import numpy as np
import pytest

from report_checks import (cell_styles, find_row, new_book, props, range_of, read_sheet, sheet_names,  # noqa: F401
                           snapshot, service)
from com.sun.star.lang import IllegalArgumentException

import lode
from refs import r_dataset

TOL = 1e-10  # the library's doubles; the report runs with one thread, Python with all (sums in another order)
SEED = 31


@pytest.fixture(scope="module")
def attitude(office):
    names, x = r_dataset("attitude")
    doc = new_book(office, [names] + [[float(v) for v in row] for row in x])
    yield names, x, doc, range_of(doc, "Answers", len(names), x.shape[0] + 1)
    with office.watchdog(60):
        doc.close(True)


def _caution(rows):
    text = " ".join(c for r in rows for c in r if isinstance(c, str))
    assert "not evidence that the scales are valid for decisions about people" in text
    assert "local law and professional testing standards" in text


def test_both_checks_write_their_sheets(office, service, attitude):
    names, x, doc, rng = attitude
    before = sheet_names(doc)
    with office.watchdog(300):
        said = service.run(doc, rng, props(Factors=2, Halves=30, Holdout=0.5, Seed=SEED))
    new = [n for n in sheet_names(doc) if n not in before]
    assert new == ["Lode overview", "Lode loadings", "Lode factors", "Lode scree", "Lode halves",
                   "Lode new respondents", "Lode run record"], new
    assert all(n in said for n in new), said

    # Replication: the C library on the same data, options and seed
    rep = lode.replicate(x, splits=30, seed=SEED, factors=2, item_names=names)
    rows = read_sheet(doc.Sheets.getByName("Lode halves"))
    for f in range(2):
        row = find_row(rows, f"Factor {f + 1}")
        assert abs(row[1] - rep.congruence_median[f]) < TOL
        assert abs(row[2] - rep.congruence_p5[f]) < TOL
        assert abs(row[3] - rep.share_fair[f]) < TOL
        assert abs(row[4] - rep.share_equal[f]) < TOL
        m = rep.congruence_median[f]
        want = "replicates:" if m >= 0.95 else "replicates fairly" if m >= 0.85 else "does not replicate"
        assert row[5].startswith(want), row
    top = [i for i, r in enumerate(rows) if r and r[0] == "Item"][0] + 1
    items = {r[0]: r for r in rows[top:top + len(names)]}
    assert sorted(items) == sorted(names)
    for j, n in enumerate(names):
        assert abs(items[n][1] - rep.item_stability[j]) < TOL, n
    assert abs(find_row(rows, "Halves suggesting the same number of factors")[1] - rep.share_same_count) < TOL
    assert find_row(rows, "Splits used")[1] == rep.splits_used
    _caution(rows)

    # The confirmatory check: the C library's hold-out check with the run's share, seed and strong-loading cut
    ho = lode.holdout_check(x, factors=2, share=0.5, seed=SEED, salient=0.40, item_names=names)
    fit = ho.confirmatory
    rows = read_sheet(doc.Sheets.getByName("Lode new respondents"))
    met = defined = 0
    for label, key, cut, at_most in [("CFI", "cfi", 0.95, False), ("TLI", "tli", 0.95, False),
                                     ("RMSEA", "rmsea", 0.06, True), ("SRMR", "srmr", 0.08, True)]:
        v = fit.statistics[key]
        row = find_row(rows, label)
        if not np.isfinite(v):
            assert row[1] == "not defined"
            continue
        ok = v <= cut if at_most else v >= cut
        defined += 1
        met += ok
        assert abs(row[1] - v) < TOL, label
        assert row[3] == ("yes" if ok else "no"), (label, row)
    reading = find_row(rows, "Reading")[1]
    assert ("every index meets" in reading) == (met == defined > 0), reading
    assert ("no index meets" in reading) == (met == 0 < defined), reading
    assert abs(find_row(rows, "Chi-square")[1] - fit.statistics["chi_square"]) < TOL * fit.statistics["chi_square"]
    assert find_row(rows, "Degrees of freedom")[1] == fit.statistics["df"]
    for i, j in enumerate(ho.items_fitted):
        row = find_row(rows, names[j])
        f = int(row[1]) - 1
        assert abs(row[2] - fit.loadings[i, f]) < TOL and abs(row[3] - fit.standard_errors[i, f]) < TOL
    gone = [i for i, r in enumerate(rows) if r and r[0] == "Items left out (salient nowhere)"][0]
    listed = [r[0] for r in rows[gone + 1:] if r and r[0] in names]
    assert listed == [names[j] for j in ho.items_left_out]
    _caution(rows)

    record = read_sheet(doc.Sheets.getByName("Lode run record"))
    assert find_row(record, "Random splits into halves")[1] == 30
    assert find_row(record, "Share held out (confirmatory check)")[1] == 0.5
    assert find_row(record, "Respondents held out")[1] == ho.n_holdout


def test_a_holdout_too_small_to_fit_is_refused_with_the_workable_shares(office, service, attitude):
    _, _, doc, rng = attitude
    before = snapshot(doc)
    styles = cell_styles(doc)
    with office.watchdog(120), pytest.raises(IllegalArgumentException) as e:
        service.run(doc, rng, props(Factors=2, Holdout=0.1, Seed=SEED))  # 3 of 30 respondents for 7 items
    assert "option Holdout is 0.10" in e.value.Message and "workable shares" in e.value.Message, e.value.Message
    assert snapshot(doc) == before and cell_styles(doc) == styles
    with office.watchdog(120), pytest.raises(IllegalArgumentException) as e:
        service.run(doc, rng, props(Halves=1))
    assert "option Halves" in e.value.Message, e.value.Message
    assert office.alive()
