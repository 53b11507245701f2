"""Malformed arguments entered into every Lode function: each must give an error value in its cell
(or, where the input is still usable, a value), and LibreOffice must keep answering. The list of
functions comes from Calc's Function Wizard, so a new function joins this suite by itself."""

import time

import numpy as np
import pytest

from office import address

ERR_INVALID_ARGUMENT = 502  # lang::IllegalArgumentException from the add-in
LONG_WAIT = 180  # seconds a single huge-range formula may take before the watchdog kills soffice


@pytest.fixture(scope="module")
def functions(lode_functions):
    return lode_functions


@pytest.fixture(scope="module")
def ranges(book):
    rng = np.random.default_rng(20261201)  # a seeded generator: inputs for error paths only
    good = rng.normal(size=(40, 5))
    r = {
        "good": book.put(good),
        "empty": "$Data.$AZ$1:$BC$30",  # nothing was ever written there
        "text": book.put_rows([["alpha", "beta", "gamma"] for _ in range(12)]),
        "one": book.put_rows([[3.5]]),
        "row": book.put_rows([[1, 2, 3, 4, 5, 6]]),
        "column": book.put_rows([[v] for v in range(10)]),
        "constant": book.put_rows([[1, 2, 7] for _ in range(10)]),
        "mixed": book.put_rows([[1, "x", None], [None, 2, "y"], ["z", None, 3], [4, 5, None]]),
    }
    # A range holding an error cell (an overflow: Calc has no infinities, =1E308*10 is #NUM!).
    top = 0
    left = book.next_col
    book.data.getCellByPosition(left, top).setFormula("=1E308*10")
    for i in range(1, 10):
        for j in range(3):
            book.data.getCellByPosition(left + j, top + i).setValue(float(i * (j + 1) % 7))
    book.data.getCellByPosition(left + 1, top).setValue(1.0)
    book.data.getCellByPosition(left + 2, top).setValue(2.0)
    r["overflow"] = f"$Data.{address(left, 0)}:{address(left + 2, 9)}"
    book.next_col += 4
    return r


def _formula(name, args, first):
    """name(first; <required ranges repeat first>) with optional arguments left out."""
    parts = [first] + [first for (_, optional) in args[1:] if not optional]
    return f"={name}({';'.join(parts)})"


def _still_answers(book):
    book.still_answers()


# Functions that show a failure as the row `error` with the reason beside it (README table).
TEXT_FAILURES = {"LODE.FIT", "LODE.PATTERNFIT"}
BAD_DATA = ["empty", "text", "one", "row", "column", "constant", "mixed", "overflow"]
# Inputs that are bad data for an analysis but a valid argument for a function: the value it must give.
# LODE.CONGRUENCE of a block of numbers with itself (several items, every column nonzero): each factor
# matches itself, congruence 1.
# LODE.ROTATE (rotation left out: oblimin) of the constant block, every row (1, 2, 7): rotation keeps
# each row's communality, 1 + 4 + 49 = 54, and simple structure puts it on one factor, so the first
# loading is sqrt(54), to the rotation's convergence tolerance (1e-6 on the gradient).
USABLE = {("LODE.CONGRUENCE", "column"): (1.0, 1e-12), ("LODE.CONGRUENCE", "constant"): (1.0, 1e-12),
          ("LODE.ROTATE", "constant"): (54 ** 0.5, 1e-6)}


@pytest.mark.parametrize("bad", BAD_DATA)
def test_bad_data_gives_an_error_value(book, functions, ranges, bad):
    for name, args in sorted(functions.items()):
        if not args:
            continue
        formula = _formula(name, args, ranges[bad])
        result = book.value(formula)
        if (name, bad) in USABLE:
            want, tol = USABLE[(name, bad)]
            assert isinstance(result, float) and abs(result - want) < tol, (name, bad, result)
            continue
        if name in TEXT_FAILURES and result == "error":  # these write the reason into their cells
            reason = book.array(formula, 1, 2)[0][1]
            assert isinstance(reason, str) and len(reason) > 10, reason
            continue
        assert isinstance(result, tuple) and result[0] == "error", f"{name} on {bad} data gave {result!r}"
    _still_answers(book)


BAD_OPTIONS = ['"no such option"', "-1", "0.5", "1E9", '""', "TRUE", "{1;2;3}", "50"]


@pytest.mark.parametrize("option", BAD_OPTIONS)
def test_bad_options_never_crash(book, functions, ranges, option):
    """Every optional argument given a malformed value: the cell shows an error or (where the value
    happens to be valid, e.g. 50 replicates) a result; never a crash."""
    for name, args in sorted(functions.items()):
        for k, (arg, optional) in enumerate(args):
            if not optional:
                continue
            parts = [ranges["good"]] + ["" for _ in args[1:k]] + [option]
            for j, (_, opt) in enumerate(args[1:k], start=1):
                if not opt:
                    parts[j] = ranges["good"]
            result = book.value(f"={name}({';'.join(parts)})")
            assert result is not None, (name, arg, option)
    _still_answers(book)


def test_factors_larger_than_items(book, functions, ranges):
    for name, args in sorted(functions.items()):
        names = [a for a, _ in args]
        if "factors" not in names:
            continue
        k = names.index("factors")
        parts = [ranges["good"]] + [""] * (k - 1) + ["9"]
        result = book.value(f"={name}({';'.join(parts)})")
        assert isinstance(result, tuple) and result[0] == "error" or isinstance(result, str), (name, result)
    _still_answers(book)


def test_a_million_rows(office, book, functions, ranges):
    """A range of 1,048,576 rows: refused at once with Err:502 (over the add-in's size limit) or,
    for a whole-column reference over 40 rows of data, trimmed and computed. Times are reported."""
    sheet = book.doc.Sheets
    sheet.insertNewByName("Big", 2)
    big = sheet.getByName("Big")
    rows = 1048576
    with office.watchdog(LONG_WAIT):
        # fill three full columns inside LibreOffice (a linear series; no transfer of the values)
        from com.sun.star.sheet.FillDirection import TO_BOTTOM
        from com.sun.star.sheet.FillMode import LINEAR
        from com.sun.star.sheet.FillDateMode import FILL_DATE_DAY
        for col, step in [(0, 1.0), (1, 2.0), (2, -1.0)]:
            cell = big.getCellByPosition(col, 0)
            cell.setValue(1.0)
            big.getCellRangeByPosition(col, 0, col, rows - 1).fillSeries(TO_BOTTOM, LINEAR, FILL_DATE_DAY, step, 1e12)
    assert big.getCellByPosition(0, rows - 1).getValue() == rows
    timings = {}
    # LibreOffice spends ~10 s building the 3 million values for each such formula before the
    # add-in sees them, and every function reads its ranges through the same code: a sample of
    # functions with differing argument lists keeps the suite's run time reasonable.
    sample = ["LODE.CORR", "LODE.EIGEN", "LODE.FIT", "LODE.ROTATE", "LODE.CONGRUENCE"]
    for name, args in sorted(functions.items()):
        if not args or name not in sample:
            continue
        t0 = time.monotonic()
        with office.watchdog(LONG_WAIT):
            result = book.value(_formula(name, args, f"$Big.A1:C{rows}"))
        timings[name] = time.monotonic() - t0
        assert result == ("error", ERR_INVALID_ARGUMENT), f"{name} on a million rows gave {result!r}"
    # a whole-column reference over a small block is trimmed to the rows in use
    t0 = time.monotonic()
    with office.watchdog(LONG_WAIT):
        result = book.value(f"=LODE.EIGEN($Data.A:E)")
    timings["LODE.EIGEN whole columns A:E (40 rows in use)"] = time.monotonic() - t0
    assert isinstance(result, float) and result > 1.0, result
    print("\nseconds per formula over 1,048,576 x 3 cells:", {k: round(v, 2) for k, v in timings.items()})
    _still_answers(book)


def test_scores_reliability_and_congruence_on_malformed_input(book, functions, ranges):
    """The four functions over scores, reliability and congruence, each given arguments that make no
    sense for it: every one shows Err:502 (the documented result of a bad argument) and LibreOffice
    keeps answering."""
    for name in ["LODE.SCORES", "LODE.ALPHA", "LODE.OMEGA", "LODE.CONGRUENCE"]:
        assert name in functions, f"{name} missing from the Function Wizard"
    good, one, text = ranges["good"], ranges["one"], ranges["text"]
    book.next_col = max(book.next_col, 60)  # keep clear of the "empty" range (columns AZ:BC)
    square = book.put(np.eye(4))  # a 4 x 4 identity: read as a correlation matrix
    corr = book.put(np.corrcoef(np.random.default_rng(3).normal(size=(50, 5)), rowvar=False))
    two_items = book.put(np.random.default_rng(4).normal(size=(30, 2)))
    narrow = book.put(np.random.default_rng(5).normal(size=(40, 4)))  # 40 x 4: not the shape of `good`
    cases = [
        f"=LODE.SCORES({corr};2)",              # scores need answers, not a correlation matrix
        f"=LODE.SCORES({square};1)",
        f"=LODE.SCORES({good};9)",              # more factors than items
        f"=LODE.SCORES({good};2;;;\"none\")",   # unknown score method
        f"=LODE.SCORES({good};2;;;3)",
        f"=LODE.SCORES({text};1)",
        f"=LODE.SCORES({one};1)",
        f"=LODE.ALPHA({corr})",                 # alpha needs answers
        f"=LODE.ALPHA({one})",
        f"=LODE.ALPHA({text})",
        f"=LODE.ALPHA({ranges['column']})",     # a single item
        f"=LODE.ALPHA({ranges['constant']})",   # constant items
        f"=LODE.OMEGA({one})",
        f"=LODE.OMEGA({two_items})",            # a one-factor fit needs 3 items
        f"=LODE.OMEGA({ranges['row']})",
        f"=LODE.OMEGA({ranges['mixed']})",
        f"=LODE.CONGRUENCE({good};{narrow})",   # shapes differ
        f"=LODE.CONGRUENCE({good};{one})",
        f"=LODE.CONGRUENCE({one};{one})",       # a single item compares nothing
        f"=LODE.CONGRUENCE({ranges['row']};{ranges['row']})",
        f"=LODE.CONGRUENCE({ranges['mixed']};{ranges['mixed']})",
        f"=LODE.CONGRUENCE({text};{good})",
        f"=LODE.CONGRUENCE({ranges['overflow']};{ranges['overflow']})",  # an error cell: Calc's own error
    ]
    for formula in cases:
        result = book.value(formula)
        assert isinstance(result, tuple) and result[0] == "error", (formula, result)
        if "overflow" not in formula and ranges["overflow"] not in formula:
            assert result[1] == ERR_INVALID_ARGUMENT, (formula, result)
    _still_answers(book)


# --- issue 22: a crash, the time limit, almost-correlation matrices, error cells, option words -------

TIME_LIMIT = 30  # seconds: the cell functions' time limit (README, "Using them"; kTimeLimit in cells.hpp)


def _disjoint_spearman_block(book):
    """A1:B4 = {1,2;2,3;3,1;4,4} and C5:C8 = {1;2;3;5}: the third item is never answered together
    with the first two, so pairwise correlations with it have no rows at all."""
    x = np.full((8, 3), np.nan)
    x[:4, :2] = [[1, 2], [2, 3], [3, 1], [4, 4]]
    x[4:, 2] = [1, 2, 3, 5]
    return book.put(x)


def test_pairwise_spearman_with_items_never_answered_together_is_an_error(book):
    block = _disjoint_spearman_block(book)
    for kind in ["pearson", "spearman", "polychoric"]:
        for missing in ["pairwise", "listwise"]:
            result = book.array(f'=LODE.CORR({block};"{kind}";"{missing}")', 3, 3)
            assert all(isinstance(v, tuple) and v[0] == "error" for row in result for v in row), (kind, missing, result)
    _still_answers(book)


def test_a_huge_sample_size_returns_within_the_time_limit(office, book):
    """n_obs = 1E9 with a correlation matrix: the fit statistics (the RMSEA interval) take no time in
    proportion to n_obs, and in any case no formula blocks the office past the time limit."""
    rng = np.random.default_rng(20261203)  # seeded input for a timing check
    f = rng.uniform(0.4, 0.8, size=(8, 2)) * (np.arange(8)[:, None] % 2 == np.arange(2)[None, :])
    x = rng.normal(size=(500, 2)) @ f.T + rng.normal(size=(500, 8)) * 0.6
    r = np.corrcoef(x, rowvar=False)
    block = book.put(r)
    for formula, rows, cols in [(f"=LODE.LOADINGS({block};2;;;1E9)", 8, 2), (f"=LODE.FIT({block};2;;;1E9)", 13, 2)]:
        t0 = time.monotonic()
        with office.watchdog(TIME_LIMIT + 20):  # soffice is killed (and the test fails) past this
            result = book.array(formula, rows, cols)
        took = time.monotonic() - t0
        assert took < TIME_LIMIT + 5, f"{formula} blocked the office for {took:.1f} s"
        assert took < 5, f"{formula} took {took:.1f} s; the time of the fit must not grow with n_obs"
        if "LOADINGS" in formula:
            assert all(isinstance(v, float) for row in result for v in row), result
        else:
            # the RMSEA and its interval bounds: the rows whose label starts with "RMSEA", estimate first
            rmsea = [row[1] for row in result if isinstance(row[0], str) and row[0].startswith("RMSEA")]
            assert len(rmsea) == 3 and all(isinstance(v, float) for v in rmsea), result
            assert min(rmsea[1:]) <= rmsea[0] <= max(rmsea[1:]) and min(rmsea) >= 0, result
    _still_answers(book)


def _square(book, m):
    return book.put(np.asarray(m, dtype=float))


def test_an_almost_correlation_matrix_is_refused_with_the_reason(book):
    """A square block that misses exactly one property of a correlation matrix (ones on the
    diagonal, symmetric, entries in [-1, 1]) and holds fractions is refused (Err:502) rather than
    read as answers; the rule is stated in the README."""
    good = np.array([[1, 0.3, 0.2, 0.1], [0.3, 1, 0.4, 0.2], [0.2, 0.4, 1, 0.5], [0.1, 0.2, 0.5, 1]])
    asym = good.copy()
    asym[0, 1] = 0.03  # a typo in one cell
    diag2 = good + np.eye(4)  # a diagonal of 2
    outside = good.copy()
    outside[1, 2] = outside[2, 1] = 1.4
    cases = {"asymmetric": asym, "diagonal of 2": diag2, "entry outside [-1, 1]": outside}
    for what, m in cases.items():
        block = _square(book, m)
        for name in ["LODE.ALPHA", "LODE.KMO", "LODE.OMEGA", "LODE.EIGEN"]:
            result = book.value(f"={name}({block})")
            assert result == ("error", ERR_INVALID_ARGUMENT), (what, name, result)
    # the correlation matrix itself is read as one (omega from it is a number in (0, 1))
    omega = book.value(f"=LODE.OMEGA({_square(book, good)})")
    assert isinstance(omega, float) and 0 < omega < 1, omega
    # whole-number answers in a square block (here 0/1 with ones on the diagonal) are still answers
    answers = np.array([[1, 0, 1, 1], [1, 1, 0, 0], [0, 1, 1, 1], [1, 0, 1, 1]])
    alpha = book.value(f"=LODE.ALPHA({_square(book, answers)})")
    assert isinstance(alpha, float), alpha
    _still_answers(book)


def test_rotate_without_a_rotation_uses_oblimin(book):
    """LODE.ROTATE's `rotation` is optional: left out or empty it is "oblimin", the default of every
    function that rotates (README table)."""
    loadings = np.array([[0.7, 0.2], [0.6, 0.3], [0.65, 0.1], [0.2, 0.7], [0.3, 0.6], [0.1, 0.75]])
    block = book.put(loadings)
    named = book.numbers(f'=LODE.ROTATE({block};"oblimin")', 6, 2)
    for formula in [f"=LODE.ROTATE({block})", f"=LODE.ROTATE({block};)", f"=LODE.ROTATE({block};;0)"]:
        got = book.numbers(formula, 6, 2)
        assert np.array_equal(got, named), (formula, got, named)


def test_option_words_with_spaces_around_them_are_trimmed(book, ranges):
    """The project's rule (README): white space around an option word is ignored, in the cells as
    in the C library's name lookups."""
    plain = book.numbers(f'=LODE.CORR({ranges["good"]};"spearman";"pairwise")', 5, 5)
    padded = book.numbers(f'=LODE.CORR({ranges["good"]};" spearman";"pairwise ")', 5, 5)
    assert np.array_equal(plain, padded)


def test_a_range_holding_an_error_value_shows_calcs_error(book):
    """Calc does not call an add-in function whose range argument holds an error value: the cell
    shows Err:504 (error in the parameter list), whatever the error in the range (README, Errors)."""
    rng = np.random.default_rng(11)
    for err_formula in ["=1/0", "=NA()", "=1E308*10"]:
        block = book.put(rng.normal(size=(12, 4)))
        col = book.next_col - 5
        book.data.getCellByPosition(col + 1, 3).setFormula(err_formula)
        for name in ["LODE.CORR", "LODE.ALPHA", "LODE.LOADINGS"]:
            result = book.value(f"={name}({block})")
            assert result == ("error", 504), (err_formula, name, result)
    _still_answers(book)
