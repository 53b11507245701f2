"""The confirmatory cells in a real LibreOffice: LODE.PATTERNLOADINGS and LODE.PATTERNFIT (the
restricted factor model by maximum likelihood) and LODE.HALVES (replication in random halves), their
cells checked against the C library on the same data (its Python binding) and, for the restricted fit,
against the maximum likelihood discrepancy and SRMR recomputed in numpy from the cells' own estimates.
Bad patterns and a correlation matrix given to LODE.HALVES show an error that says why.

Data: R's 'datasets' package: Harman74.cor (Harman 1976; 24 psychological tests, n = 145) with the
first 19 tests in their published groups (spatial 1-4, verbal 5-9, speed 10-13, memory 14-19; Harman
1976, the Holzinger-Swineford battery), and attitude (Chatterjee and Price 1977; 30 x 7).
"""

import numpy as np
import pytest

import lode  # the C library through its Python binding (capi/python)
from refs import r_dataset, run_r

TOL = 1e-9  # the cells hold the C library's doubles; only the transfer through Calc is in between
HARMAN_N = 145
GROUPS = [1] * 4 + [2] * 5 + [3] * 4 + [4] * 6  # the published grouping of tests 1-19


@pytest.fixture(scope="module")
def harman(book):
    R = run_r('emit("R", datasets::Harman74.cor$cov[1:19, 1:19])')["R"]
    return R, book.put(R)


@pytest.fixture(scope="module")
def attitude(book):
    names, x = r_dataset("attitude")
    return x, book.put(x, names)


def _pattern01(groups, k):
    p = np.zeros((len(groups), k))
    for i, g in enumerate(groups):
        p[i, g - 1] = 1.0
    return p


def test_pattern_cells_match_the_c_library_and_the_discrepancy(book, harman):
    R, rng = harman
    k = 4
    P = _pattern01(GROUPS, k)
    groups = book.put(np.array(GROUPS, dtype=float).reshape(-1, 1))  # one column of factor numbers
    zero_one = book.put(P)  # the same pattern as 0/1
    ref = lode.fit_pattern(corr=R, n_obs=HARMAN_N, pattern=P)
    assert ref.converged
    L = book.numbers(f"=LODE.PATTERNLOADINGS({rng};{groups};{HARMAN_N})", 19, k)
    assert np.max(np.abs(L - ref.loadings)) < TOL
    assert np.array_equal(book.numbers(f"=LODE.PATTERNLOADINGS({rng};{zero_one};{HARMAN_N})", 19, k), L)
    assert np.all(L[P == 0] == 0.0)
    se = book.array(f'=LODE.PATTERNLOADINGS({rng};{groups};{HARMAN_N};"se")', 19, k)
    for i in range(19):
        for f in range(k):
            if P[i, f]:
                assert abs(se[i][f] - ref.standard_errors[i, f]) < TOL
            else:
                assert se[i][f] == ""  # a fixed loading has no standard error
    u = book.numbers(f'=LODE.PATTERNLOADINGS({rng};{groups};{HARMAN_N};"uniqueness")', 19, 1)[:, 0]
    phi = book.numbers(f'=LODE.PATTERNLOADINGS({rng};{groups};{HARMAN_N};"factorcorr")', k, k)
    assert np.max(np.abs(u - ref.uniquenesses)) < TOL
    assert np.max(np.abs(phi - ref.factor_correlations)) < TOL

    fit = book.array(f"=LODE.PATTERNFIT({rng};{groups};{HARMAN_N})", 12, 2)
    values = {row[0]: row[1] for row in fit}
    assert list(values) == ["chi-square", "df", "p", "CFI", "TLI", "RMSEA", "RMSEA lower (90%)", "RMSEA upper (90%)",
                            "SRMR", "BIC", "converged", "Heywood cases"], fit
    s = ref.statistics
    for label, key in [("chi-square", "chi_square"), ("df", "df"), ("p", "p_value"), ("CFI", "cfi"), ("TLI", "tli"),
                       ("RMSEA", "rmsea"), ("SRMR", "srmr"), ("BIC", "bic")]:
        assert abs(values[label] - s[key]) <= TOL * max(1.0, abs(s[key])), label
    assert abs(values["RMSEA lower (90%)"] - s["rmsea_ci"][0]) < TOL
    assert abs(values["RMSEA upper (90%)"] - s["rmsea_ci"][1]) < TOL
    assert values["converged"] == 1.0
    # numpy, from the cells' own estimates: Sigma = L Phi L' + diag(u); chi-square = (N - 1) F with
    # F = ln|Sigma| - ln|R| + tr(R Sigma^-1) - p (Joreskog 1969); df = p(p+1)/2 - free parameters;
    # SRMR over the lower triangle with the diagonal
    sigma = L @ phi @ L.T + np.diag(u)
    F = np.linalg.slogdet(sigma)[1] - np.linalg.slogdet(R)[1] + np.trace(R @ np.linalg.inv(sigma)) - 19
    assert abs(values["chi-square"] - (HARMAN_N - 1) * F) < 1e-7 * values["chi-square"]
    assert values["df"] == 19 * 20 / 2 - (19 + k * (k - 1) / 2 + 19)
    low = np.tril_indices(19)
    assert abs(values["SRMR"] - np.sqrt(np.mean((R - sigma)[low] ** 2))) < 1e-8


def test_halves_match_the_c_library(book, attitude):
    x, rng = attitude
    ref = lode.replicate(x, splits=20, seed=7, factors=2)
    table = book.numbers(f'=LODE.HALVES({rng};2;"ml";"oblimin";20;7)', 2, 4)
    assert np.max(np.abs(table[:, 0] - ref.congruence_median)) < TOL
    assert np.max(np.abs(table[:, 1] - ref.congruence_p5)) < TOL
    assert np.max(np.abs(table[:, 2] - ref.share_fair)) < TOL
    assert np.max(np.abs(table[:, 3] - ref.share_equal)) < TOL
    items = book.numbers(f'=LODE.HALVES({rng};2;"ml";"oblimin";20;7;"items")', 7, 1)[:, 0]
    assert np.max(np.abs(items - ref.item_stability)) < TOL
    count = book.numbers(f'=LODE.HALVES({rng};2;"ml";"oblimin";20;7;"count")', 1, 2)[0]
    assert abs(count[0] - ref.share_same_count) < TOL and count[1] == ref.splits_used
    # numpy: the shares are shares of the used splits' congruences
    c = np.asarray(ref.congruence)
    assert np.max(np.abs(np.mean(c >= 0.85, axis=0) - table[:, 2])) < 1e-12


def test_bad_patterns_and_sources_say_why(book, harman, attitude):
    R, rng = harman
    on_none = book.put(np.array([0] + GROUPS[1:], dtype=float).reshape(-1, 1))  # the first test on no factor
    lonely = book.put(np.array(GROUPS[:-1] + [5], dtype=float).reshape(-1, 1))  # factor 5 with one test
    short = book.put(np.array(GROUPS[:10], dtype=float).reshape(-1, 1))  # not one row per item
    for pattern, words in [(on_none, "on no factor"), (lonely, "at least two items"), (short, "one row per item")]:
        fit = book.array(f"=LODE.PATTERNFIT({rng};{pattern};{HARMAN_N})", 1, 2)
        assert fit[0][0] == "error" and words in fit[0][1], fit
        cell = book.value(f"=LODE.PATTERNLOADINGS({rng};{pattern};{HARMAN_N})")
        assert cell == ("error", 502), cell
    # a correlation matrix cannot be split into halves of respondents
    result = book.value(f"=LODE.HALVES({rng};2)")
    assert isinstance(result, tuple) and result[0] == "error", result
    book.still_answers()
