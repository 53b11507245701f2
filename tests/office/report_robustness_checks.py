"""The report service (org.lode.calc.AnalysisReport) given what a careless or unlucky caller gives it:
a cancel with nothing running, whole-number options past 32 bits, a number of factors or resamples
the analysis cannot use, option words with spaces around them, and items never answered together
under pairwise Spearman correlations. Each must be refused by name (IllegalArgumentException) with
the workbook left as it was, or run normally; LibreOffice must survive every call.

Run by ctest as part of office_report (tests/office/CMakeLists.txt), with URE_MORE_TYPES set.
"""

import time

import numpy as np
import pytest

from report_checks import cell_styles, new_book, props, range_of, sheet_names, snapshot, service  # noqa: F401
from com.sun.star.lang import IllegalArgumentException

REPORT_SHEET_COUNT = 5  # overview, loadings, factors, scree, run record (two factors here: no general factor)


@pytest.fixture(scope="module")
def answers(office):
    """200 invented respondents x 6 items with two factors (seeded), under a header row."""
    rng = np.random.default_rng(20261203)
    lam = np.zeros((6, 2))
    lam[:3, 0] = [0.8, 0.75, 0.7]
    lam[3:, 1] = [0.8, 0.7, 0.75]
    x = np.clip(np.round(3 + 1.2 * (rng.normal(size=(200, 2)) @ lam.T + rng.normal(size=(200, 6)) * 0.55)), 1, 5)
    rows = [[f"Q{j + 1}" for j in range(6)]] + [[float(v) for v in r] for r in x]
    doc = new_book(office, rows)
    yield doc, range_of(doc, "Answers", 6, 201)
    with office.watchdog(60):
        doc.close(True)


def _refused(office, service, doc, rng, words, **opts):
    before = snapshot(doc)
    styles = cell_styles(doc)
    with office.watchdog(120), pytest.raises(IllegalArgumentException) as e:
        service.run(doc, rng, props(**opts))
    for w in words:
        assert w in e.value.Message, (opts, e.value.Message)
    assert snapshot(doc) == before
    assert cell_styles(doc) == styles
    assert office.alive()
    return e.value.Message


def _runs(office, service, doc, rng, **opts):
    before = sheet_names(doc)
    with office.watchdog(300):
        said = service.run(doc, rng, props(**opts))
    new = [n for n in sheet_names(doc) if n not in before]
    assert len(new) == REPORT_SHEET_COUNT and all(n in said for n in new), said
    return new


def test_a_cancel_with_nothing_running_does_not_stop_later_runs(office, service, answers):
    doc, rng = answers
    service.cancel()
    service.cancel()
    assert not service.isRunning()
    _runs(office, service, doc, rng, Factors=2)
    # a cancelled background run does not stop the next run either
    with office.watchdog(300):
        assert service.start(doc, rng, props(Factors=2, Bootstrap=100000), None)
        service.cancel()
        deadline = time.monotonic() + 200
        while service.isRunning() and time.monotonic() < deadline:
            time.sleep(0.05)
    assert service.lastOutcome().startswith("stopped: the analysis was cancelled"), service.lastOutcome()
    _runs(office, service, doc, rng, Factors=2)


@pytest.mark.parametrize("option,value,words", [
    ("Factors", 2 ** 32 + 2, ["Factors", "4294967298"]),
    ("Bootstrap", 2 ** 32 + 3, ["Bootstrap", "4294967299"]),
    ("HeaderRow", 2 ** 32 + 1, ["HeaderRow", "4294967297"]),
    ("Factors", -(2 ** 32) + 2, ["Factors"]),
    ("Factors", 2.0 ** 40, ["Factors", "1099511627776"]),
    ("Bootstrap", 1e300, ["Bootstrap"]),
    ("Seed", -1, ["Seed"]),
    ("CancelAfterSheets", 2 ** 40, ["CancelAfterSheets"]),
    ("Factors", 2.5, ["Factors", "whole number"]),
])
def test_whole_number_options_past_their_range_are_refused_by_name(office, service, answers, option, value, words):
    """Before, Factors = 2**32 + 2 fitted 2 factors, Bootstrap = 2**32 + 3 drew 3 resamples and
    HeaderRow = 2**32 + 1 read a header: the 64-bit values were cut to 32 bits."""
    doc, rng = answers
    _refused(office, service, doc, rng, words, **{option: value})


def test_as_many_factors_as_items_is_refused_not_reported(office, service, answers):
    doc, rng = answers
    msg = _refused(office, service, doc, rng, ["Factors", "6"], Factors=6)
    assert "fewer factors than items" in msg, msg
    # more than maximum likelihood identifies from 6 items (3): refused as well
    _refused(office, service, doc, rng, ["Factors"], Factors=4, Extraction="ml")


def test_a_single_bootstrap_resample_is_refused(office, service, answers):
    doc, rng = answers
    _refused(office, service, doc, rng, ["Bootstrap", "2 to 100000"], Factors=2, Bootstrap=1)


def test_option_words_with_spaces_around_them_are_accepted(office, service, answers):
    doc, rng = answers
    _runs(office, service, doc, rng, Factors=2, Correlation=" spearman", Missing="pairwise ", Rotation=" varimax ")


def test_pairwise_spearman_with_items_never_answered_together_is_refused(office, service):
    """Issue 22: A1:B4 = {1,2;2,3;3,1;4,4}, C5:C8 = {1;2;3;5} under pairwise Spearman crashed
    LibreOffice (the empty pair was ranked). Now the correlations are refused with the reason."""
    rows = [["a", "b", "c"], [1.0, 2.0, None], [2.0, 3.0, None], [3.0, 1.0, None], [4.0, 4.0, None],
            [None, None, 1.0], [None, None, 2.0], [None, None, 3.0], [None, None, 5.0]]
    doc = new_book(office, rows)
    try:
        rng = range_of(doc, "Answers", 3, 9)
        for kind in ["spearman", "pearson", "polychoric"]:
            _refused(office, service, doc, rng, [], Correlation=kind, Missing="pairwise", HeaderRow=1)
    finally:
        with office.watchdog(60):
            doc.close(True)
