"""A systematic grid of malformed cell formulas over every LODE.* function of the Function Wizard:
each function x each argument x bad values (text, empty, negative, zero, huge, fractions, booleans,
arrays, ranges, error values, numbers as text) and each data argument x bad ranges (no numbers, one
cell, one row or column, constant items, error cells, missing-value patterns such as two items never
answered together, almost-correlation matrices, extreme scales), plus LODE.CORR with every correlation
kind and missing-value rule over the missing-value patterns.

For each formula the test knows whether an error value is due, a value is due, or either is
acceptable, and counts: crashes (LibreOffice gone), hangs (a formula that blocks the office past the
cell functions' time limit; the harness's watchdog kills soffice well before the suite's timeout),
numbers where an error is due, errors where a value is due, and #VALUE! (a defect in Lode). All must
be 0. A function added to the table joins the grid by itself; an argument name the grid does not know
fails the test until its valid values are stated in VALID below.
"""

import time

import numpy as np
import pytest

from office import address

TIME_LIMIT = 30  # seconds: the cell functions' time limit (README, "Using them"; kTimeLimit in cells.hpp)
WATCHDOG = TIME_LIMIT + 30  # a formula still computing after this kills soffice (and fails the test)
INTERNAL = 519  # #VALUE!: a defect in Lode (README, Errors)

# Values typed as an optional argument (formula text). Blank strings are "left out" (the default).
BAD_VALUES = ['"no such option"', '""', '"   "', "-1", "0", "0.5", "1", "2", "1E9", "1E308", "-1E308", "TRUE",
              "FALSE", "{1;2;3}", "1/0", "NA()", '"1"', "2^53", "RANGE"]
BLANK = {'""', '"   "'}
ERRORS = {"{1;2;3}", "1/0", "NA()", '"1"', "RANGE"}  # an error for every argument: arrays, ranges, errors, text
NUMERIC = {"-1": -1.0, "0": 0.0, "0.5": 0.5, "1": 1.0, "2": 2.0, "1E9": 1e9, "1E308": 1e308, "-1E308": -1e308,
           "TRUE": 1.0, "FALSE": 0.0, "2^53": 2.0 ** 53}


def _whole(lo, hi):
    return lambda v: v == int(v) and lo <= v <= hi if abs(v) < 1e300 else False


# For each argument name: which numeric values are valid (True = a value is due, False = an error is
# due, None = either). Words ("no such option") are always an error; blanks always take the default.
VALID = {
    "kind": lambda v: False, "missing": lambda v: False, "method": lambda v: False,
    "rotation": lambda v: False, "rule": lambda v: False, "score_method": lambda v: False,
    "reduced": lambda v: v in (0.0, 1.0),
    # factors 0 (suggest), 1 or 2 on six items with two factors; 3 has df 0 for ML (allowed, may not
    # converge); more than 3 cannot be identified from six items
    "factors": lambda v: True if v in (0.0, 1.0, 2.0) else None if v == 3.0 else False,
    "n_obs": _whole(1, 10 ** 9),
    "replicates": _whole(10, 10000),
    "percentile": lambda v: 0 < v < 100,
    "seed": _whole(0, 2 ** 52),
    "parameter": lambda v: None,  # any number is a parameter of some rotation; convergence is the data's
    "splits": _whole(2, 10000),
    "part": lambda v: False,
    # the good data's groups have 100 respondents each: a larger smallest group leaves fewer than 2
    "min_group": _whole(2, 100),
    "threshold": lambda v: 0 < v < 2,
}
# Functions that need the sample size of a correlation matrix given as data (the restricted fit's
# statistics and standard errors): n_obs left out is an error for them.
NEEDS_N_OBS = {"LODE.SPHERICITY", "LODE.PATTERNLOADINGS", "LODE.PATTERNFIT"}
# A general factor needs at least 3 factors, and the good data have 2 (3 on six items may not be
# identified): an option left out or any number typed may give a value or a refusal; malformed values
# must give an error.
GENERAL_FUNCTIONS = {"LODE.GENERAL", "LODE.GENERALOMEGA"}


@pytest.fixture(scope="module")
def inputs(book):
    rng = np.random.default_rng(20261203)  # seeded inputs for error paths only
    lam = np.zeros((6, 2))
    lam[:3, 0] = [0.8, 0.75, 0.7]
    lam[3:, 1] = [0.8, 0.7, 0.75]
    good = rng.normal(size=(200, 2)) @ lam.T + rng.normal(size=(200, 6)) * 0.55
    corr = np.corrcoef(good, rowvar=False)
    r = {"good": book.put(good), "corr": book.put(corr), "loadings": book.put(lam + 0.1 * rng.uniform(size=(6, 2))),
         "pattern": book.put((lam > 0).astype(float)),  # the simple structure of `good`, for the pattern cells
         "groups": book.put_rows([["north" if i % 2 else "south"] for i in range(200)])}

    def nan_block(rows, cols, fill):
        x = np.full((rows, cols), np.nan)
        fill(x)
        return book.put(x)

    def disjoint(x):  # issue 22: items 1-2 and item 3 never answered together
        x[:4, :2] = [[1, 2], [2, 3], [3, 1], [4, 4]]
        x[4:, 2] = [1, 2, 3, 5]

    def one_shared_row(x):  # items 1-2 on rows 1-6, item 3 on rows 6-11: one row in common
        x[:6, :2] = rng.integers(1, 6, size=(6, 2))
        x[5:, 2] = rng.integers(1, 6, size=6)

    def each_row_one_item(x):
        for i in range(x.shape[0]):
            x[i, i % x.shape[1]] = float(i % 5 + 1)

    good_corr = np.array([[1, 0.3, 0.2, 0.1], [0.3, 1, 0.4, 0.2], [0.2, 0.4, 1, 0.5], [0.1, 0.2, 0.5, 1]])
    asym = good_corr.copy()
    asym[0, 1] = 0.03
    bad = {
        "empty": "$Data.$ZZ$1:$AAC$30",  # nothing is ever written there
        "text": book.put_rows([["alpha", "beta", "gamma"] for _ in range(12)]),
        "numbers as text": book.put_rows([[str(v), str(v + 1), str(v * 2)] for v in range(12)]),
        "one cell": book.put_rows([[3.5]]),
        "one row": book.put_rows([[1, 2, 3, 4, 5, 6]]),
        "one column": book.put_rows([[v] for v in range(10)]),
        "constant": book.put_rows([[1, 2, 7] for _ in range(10)]),
        "two rows": book.put_rows([[1, 2, 3, 4], [2, 1, 4, 3]]),
        "mixed": book.put_rows([[1, "x", None], [None, 2, "y"], ["z", None, 3], [4, 5, None]]),
        "disjoint answers": nan_block(8, 3, disjoint),
        "one shared row": nan_block(11, 3, one_shared_row),
        "one item per row": nan_block(12, 4, each_row_one_item),
        "an item never answered": book.put_rows([["a", "b", "c", "d"]] + [[i % 5, "n/a", (i * 3) % 5, (i * 7) % 5]
                                                                         for i in range(15)]),
        "almost correlation (asymmetric)": book.put(asym),
        "almost correlation (diagonal 2)": book.put(good_corr + np.eye(4)),
        "huge scale": book.put(good[:40] * 1e300),
        "tiny scale": book.put(good[:40] * 1e-300),
    }
    # ranges holding an error value: Calc's own error (the function is not called)
    for name, formula in [("#NUM! cell", "=1E308*10"), ("#DIV/0! cell", "=1/0"), ("#N/A cell", "=NA()")]:
        block = book.put(good[:20, :4])
        book.data.getCellByPosition(book.next_col - 4, 2).setFormula(formula)
        bad[name] = block
    r["bad"] = bad
    r["RANGE"] = f"$Data.{address(0, 0)}:{address(1, 1)}"  # a 2 x 2 block of numbers given as an option
    return r


# Ranges that are a usable block of numbers (every cell a number, at least two rows): valid loadings
# for LODE.ROTATE and LODE.CONGRUENCE, where whether they rotate or match is the numbers' business.
COMPLETE = {"constant", "two rows", "one column", "almost correlation (asymmetric)",
            "almost correlation (diagonal 2)", "huge scale", "tiny scale"}
# Answers scaled by 1e300 or 1e-300: correlations, alpha and the fits are scale-free, so a number or
# a refusal may come back (the C library's tests check that such a number is right).
SCALED = {"huge scale", "tiny scale"}
LOADING_FUNCTIONS = {"LODE.ROTATE", "LODE.CONGRUENCE"}


class Tally:
    def __init__(self, book, office):
        self.book, self.office = book, office
        self.formulas = 0
        self.problems = {"crash": [], "hang": [], "number where an error is due": [],
                         "error where a value is due": [], "#VALUE! (a defect)": []}
        self.slowest = (0.0, "")

    def check(self, formula, due):
        """due: "error", "value" or None (either)."""
        self.formulas += 1
        t0 = time.monotonic()
        with self.office.watchdog(WATCHDOG):
            result = self.book.value(formula)
        took = time.monotonic() - t0
        self.slowest = max(self.slowest, (took, formula))
        if not self.office.alive():
            self.problems["crash"].append(formula)
            pytest.fail(f"LibreOffice died on {formula}")
        if took > TIME_LIMIT + 5:
            self.problems["hang"].append(f"{formula} ({took:.0f} s)")
        is_error = isinstance(result, tuple) or result == "error"  # LODE.FIT writes "error" and the reason
        if isinstance(result, tuple) and result[1] == INTERNAL:
            self.problems["#VALUE! (a defect)"].append(formula)
        if due == "error" and not is_error:
            self.problems["number where an error is due"].append(f"{formula} -> {result!r}")
        if due == "value" and is_error:
            self.problems["error where a value is due"].append(f"{formula} -> {result!r}")
        return result

    def report(self, what):
        counts = {k: len(v) for k, v in self.problems.items()}
        print(f"\n{what}: {self.formulas} formulas; {counts}; slowest {self.slowest[0]:.2f} s: {self.slowest[1]}")
        for kind, items in self.problems.items():
            for item in items[:40]:
                print(f"  {kind}: {item}")
        assert not any(counts.values()), {k: v[:8] for k, v in self.problems.items() if v}


def _call(name, args):
    return f"={name}({';'.join(args)})"


def _required(name, spec, inputs, first):
    """The arguments with `first` as the first and good values for the other required ones."""
    fill = inputs["loadings"] if name in LOADING_FUNCTIONS else inputs["good"]
    special = {"pattern": inputs["pattern"], "groups": inputs["groups"]}
    return [first] + [special.get(arg, fill) if not optional else ""
                      for (arg, optional) in spec[1:]]


def test_every_data_argument_with_bad_ranges(office, book, lode_functions, inputs):
    tally = Tally(book, office)
    for name, spec in sorted(lode_functions.items()):
        for pos, (arg, optional) in enumerate(spec):
            if optional:
                continue
            for what, rng in inputs["bad"].items():
                args = _required(name, spec, inputs, inputs["loadings"] if name in LOADING_FUNCTIONS else inputs["good"])
                args[pos] = rng
                while args and args[-1] == "":
                    args.pop()
                if name == "LODE.ROTATE":
                    due = None if what in COMPLETE else "error"  # a usable block is rotated (or not converged)
                elif name == "LODE.CONGRUENCE":
                    due = "error"  # no bad range has the shape of the other argument (6 x 2)
                else:
                    due = None if what in SCALED else "error"
                tally.check(_call(name, args), due)
    tally.report("data arguments x bad ranges")
    book.still_answers()


def test_every_optional_argument_with_bad_values(office, book, lode_functions, inputs):
    tally = Tally(book, office)
    for name, spec in sorted(lode_functions.items()):
        names = [a for a, _ in spec]
        for pos, (arg, optional) in enumerate(spec):
            if not optional:
                continue
            assert arg in VALID, f"{name}: the grid does not know the argument '{arg}'; add it to VALID"
            # data first; LODE.LOADINGS and its kin get factors = 2 when another argument is varied,
            # so the value under test, not the factor count, decides
            sources = [inputs["good"]]
            if arg == "n_obs":
                sources.append(inputs["corr"])  # n_obs matters for a correlation matrix
            for source in sources:
                for value in BAD_VALUES:
                    args = _required(name, spec, inputs, inputs["loadings"] if name in LOADING_FUNCTIONS else source)
                    if "factors" in names and arg != "factors":
                        args[names.index("factors")] = "2"
                    args[pos] = inputs["RANGE"] if value == "RANGE" else value
                    while args and args[-1] == "":
                        args.pop()
                    if value in BLANK:
                        # left out: the default; a correlation matrix without n_obs has no test of sphericity
                        due = "error" if name in NEEDS_N_OBS and source == inputs["corr"] else "value"
                        if name in GENERAL_FUNCTIONS:
                            due = None  # 2 factors: refused (test_structure_cells.py checks values)
                    elif value in ERRORS or value not in NUMERIC:
                        due = "error"
                    else:
                        ok = VALID[arg](NUMERIC[value]) if name not in GENERAL_FUNCTIONS else None
                        due = None if ok is None else "value" if ok else "error"
                        if arg == "n_obs" and source == inputs["corr"] and ok and NUMERIC[value] <= 6:
                            due = "error"  # a correlation matrix of 6 items needs more than 6 observations
                    tally.check(_call(name, args), due)
    tally.report("optional arguments x bad values")
    book.still_answers()


@pytest.mark.parametrize("kind", ["pearson", "spearman", "polychoric"])
def test_every_correlation_kind_over_missing_value_patterns(office, book, inputs, kind):
    """Issue 22: pairwise Spearman over items never answered together crashed LibreOffice; every kind
    and missing-value rule over each missing-value pattern must show an error."""
    tally = Tally(book, office)
    patterns = ["disjoint answers", "one shared row", "one item per row", "an item never answered", "mixed",
                "two rows"]
    for missing in ["pairwise", "listwise", ""]:
        for what in patterns:
            tally.check(f'=LODE.CORR({inputs["bad"][what]};"{kind}";"{missing}")', "error")
            tally.check(f'=LODE.CORR({inputs["bad"][what]};" {kind} ";" {missing} ")', "error")
    # a usable correlation of the good data with the same options, as a control
    for missing in ["pairwise", "listwise"]:
        tally.check(f'=LODE.CORR({inputs["good"]};"{kind}";"{missing}")', "value" if kind != "polychoric" else None)
    tally.report(f"LODE.CORR {kind} x missing-value patterns")
    book.still_answers()
