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
def functions(office):
    fd = office.smgr.createInstanceWithContext("com.sun.star.sheet.FunctionDescriptions", office.ctx)
    out = {}
    for i in range(fd.getCount()):
        props = {p.Name: p.Value for p in fd.getByIndex(i)}
        if props["Name"].startswith("LODE."):
            out[props["Name"]] = [(a.Name, a.IsOptional) for a in (props["Arguments"] or ())]
    assert len(out) >= 3
    return out


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
    assert book.office.alive(), "LibreOffice died"
    assert book.value("=1+1") == 2.0


BAD_DATA = ["empty", "text", "one", "row", "column", "constant", "mixed", "overflow"]
# Inputs that are bad data for an analysis but a valid argument for a function: the value it must give.
# LODE.CONGRUENCE of a block of numbers with itself (several items, every column nonzero): each factor
# matches itself, congruence 1.
USABLE = {("LODE.CONGRUENCE", "column"): 1.0, ("LODE.CONGRUENCE", "constant"): 1.0}


@pytest.mark.parametrize("bad", BAD_DATA)
def test_bad_data_gives_an_error_value(book, functions, ranges, bad):
    for name, args in sorted(functions.items()):
        if not args:
            continue
        formula = _formula(name, args, ranges[bad])
        result = book.value(formula)
        if (name, bad) in USABLE:
            assert isinstance(result, float) and abs(result - USABLE[(name, bad)]) < 1e-12, (name, bad, result)
            continue
        if name == "LODE.FIT" and result == "error":  # LODE.FIT writes the reason into its cells
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
