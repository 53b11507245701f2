"""Factor scores, reliability and congruence as cell functions (LODE.SCORES, LODE.ALPHA, LODE.OMEGA,
LODE.CONGRUENCE) in a real LibreOffice; cells checked against the C library on the same data (its
Python binding, capi/python/lode) and against outside references run live, named beside each
check: R's base stats::factanal (regression and Bartlett scores, one-factor fits), and numpy/scipy
computing the published definitions (Cronbach 1951, McDonald 1999, Tucker 1951).

Data: R's datasets::attitude (Chatterjee and Price 1977; 30 x 7 ratings), datasets::mtcars
(Henderson and Velleman 1981; 32 x 11), datasets::USJudgeRatings (43 x 12) and datasets::Harman74.cor
(Harman 1976), open data shipped by Debian's r-base-core."""

import itertools

import numpy as np
import pytest
import scipy.optimize

import lode  # the C library through its Python binding
from refs import r_dataset, run_r

TOL = 1e-9  # the cells hold the C library's doubles; only the transfer through Calc is in between
ERR_INVALID_ARGUMENT, ERR_NUM, ERR_NO_CONVERGENCE = 502, 503, 523


@pytest.fixture(scope="module")
def attitude(book):
    names, x = r_dataset("attitude")
    return names, x, book.put(x, names)


@pytest.fixture(scope="module")
def mtcars(book):
    names, x = r_dataset("mtcars")
    return names, x, book.put(x, names)


@pytest.fixture(scope="module")
def judges(book):
    names, x = r_dataset("USJudgeRatings")
    return names, x, book.put(x, names)


def match_columns(actual, expected):
    """Permutes and reflects the columns of `actual` to best match `expected` (factors are unique only
    up to order and sign): scipy.optimize.linear_sum_assignment on |correlation|."""
    a, e = np.asarray(actual, float), np.asarray(expected, float)
    k = a.shape[1]
    c = np.array([[np.corrcoef(a[:, i], e[:, j])[0, 1] for j in range(k)] for i in range(k)])
    rows, cols = scipy.optimize.linear_sum_assignment(-np.abs(c))
    out = np.zeros_like(e)
    for i, j in zip(rows, cols):
        out[:, j] = a[:, i] * np.sign(c[i, j])
    return out


def _cells_grid(cells):
    return [[("error", c[1]) if isinstance(c, tuple) else c for c in row] for row in cells]


# --- LODE.SCORES ------------------------------------------------------------------------------------


def test_function_wizard_shows_the_score_cautions(office):
    """The cautions on using scores about people are in LODE.SCORES's description, word for word as the
    C library gives them (LODE_SCORES_CAUTIONS)."""
    fd = office.smgr.createInstanceWithContext("com.sun.star.sheet.FunctionDescriptions", office.ctx)
    found = {}
    for i in range(fd.getCount()):
        props = {p.Name: p.Value for p in fd.getByIndex(i)}
        found[props["Name"]] = props
    for name in ["LODE.SCORES", "LODE.ALPHA", "LODE.OMEGA", "LODE.CONGRUENCE"]:
        assert name in found, f"{name} missing from the Function Wizard"
    x = np.random.default_rng(5).normal(size=(60, 4)) + np.random.default_rng(6).normal(size=(60, 1))
    cautions = lode.scores(None, lode.fit(x, factors=1)).cautions
    assert len(cautions) > 100
    assert cautions in found["LODE.SCORES"]["Description"]
    args = {a.Name: a.Description for a in found["LODE.SCORES"]["Arguments"]}
    assert list(args) == ["data", "factors", "method", "rotation", "score_method"]
    assert "correlation_preserving" in args["score_method"] and "bartlett" in args["score_method"]


@pytest.mark.parametrize("k", [2, 3])
def test_scores_regression_and_bartlett_match_factanal(book, mtcars, k):
    """Complete data, maximum likelihood, varimax. R's stats::factanal computes regression (Thurstone
    1935) and Bartlett (1937) scores from its own fit; Lode's fit differs from factanal's at factanal's
    optimiser and varimax tolerances (eps = 1e-5), so those scores agree to about 1e-2. Factanal's
    scoring expressions evaluated in R on the cells' own loadings and uniquenesses must agree to
    rounding."""
    names, x, rng = mtcars
    n, p = x.shape
    args = f'{rng};{k};"ml";"varimax"'
    reg = book.numbers(f'=LODE.SCORES({args};"regression")', n, k)
    bart = book.numbers(f'=LODE.SCORES({args};"bartlett")', n, k)
    loadings = book.numbers(f"=LODE.LOADINGS({args})", p, k)
    uniq = book.numbers(f"=LODE.UNIQUENESS({args})", p, 1)
    ref = run_r(f"""
      fr <- factanal(X, factors = {k}, rotation = "varimax", scores = "regression")
      fb <- factanal(X, factors = {k}, rotation = "varimax", scores = "Bartlett")
      emit("sr", fr$scores); emit("sb", fb$scores)
      # factanal's own scoring expressions (R 4.2 stats:::factanal), on Lode's solution
      zz <- scale(X, TRUE, TRUE); cv <- cor(X); d <- 1 / U[, 1]; tmp <- t(L * d)
      emit("lr", zz %*% solve(cv, L)); emit("lb", t(solve(tmp %*% L, tmp %*% t(zz))))
    """, {"X": x, "L": loadings, "U": uniq})
    assert np.max(np.abs(match_columns(reg, ref["sr"]) - ref["sr"])) < 1e-2
    assert np.max(np.abs(match_columns(bart, ref["sb"]) - ref["sb"])) < 1e-2
    assert np.max(np.abs(reg - ref["lr"])) < 1e-9
    assert np.max(np.abs(bart - ref["lb"])) < 1e-9
    # the default score method is regression
    assert np.array_equal(book.numbers(f"=LODE.SCORES({args})", n, k), reg)
    # the C library on the same data and options
    m = lode.fit(x, factors=k, method="ml", rotation="varimax")
    assert np.max(np.abs(reg - lode.scores(None, m, "regression").values)) < TOL
    assert np.max(np.abs(bart - lode.scores(None, m, "bartlett").values)) < TOL


def test_correlation_preserving_scores_reproduce_the_factor_correlations(book, attitude):
    """ten Berge, Krijnen, Wansbeek & Shapiro (1999): correlation-preserving scores of complete data
    correlate in the sample exactly as the factors do (numpy.corrcoef against LODE.FACTORCORR), with
    unit standard deviation (numpy.std, ddof = 1)."""
    names, x, rng = attitude
    n, k = x.shape[0], 2
    args = f'{rng};{k};"minres";"oblimin"'
    s = book.numbers(f'=LODE.SCORES({args};"correlation_preserving")', n, k)
    # the former word is still read, to the same scores
    assert np.array_equal(book.numbers(f'=LODE.SCORES({args};"tenberge")', n, k), s)
    phi = book.numbers(f"=LODE.FACTORCORR({args})", k, k)
    assert abs(phi[0, 1]) > 0.05  # the solution really is oblique
    assert np.max(np.abs(np.corrcoef(s, rowvar=False) - phi)) < 1e-8
    assert np.max(np.abs(s.std(axis=0, ddof=1) - 1)) < 1e-8
    m = lode.fit(x, factors=k, method="minres", rotation="oblimin")
    assert np.max(np.abs(s - lode.scores(None, m, "correlation_preserving").values)) < TOL


def test_scores_with_missing_answers_follow_the_c_rule(book, judges):
    """A respondent who answered at least half of the items is scored from the items answered; one who
    answered fewer shows #NUM! in every cell of the row (the C ABI's LODE_GAPS_FROM_ANSWERED)."""
    names, x, _ = judges
    x = x.copy()
    x[2, 0] = np.nan                  # one item skipped: scored from the other eleven
    x[5, [1, 4, 7]] = np.nan          # three skipped: still scored
    x[9, :7] = np.nan                 # seven of twelve skipped: not scored
    x[11, :] = np.nan                 # nothing answered: not scored (an empty row inside the range)
    rng = book.put(x, names)
    n, k = x.shape[0], 2
    cells = _cells_grid(book.array(f'=LODE.SCORES({rng};{k};"ml";"varimax")', n, k))
    m = lode.fit(x, factors=k, method="ml", rotation="varimax")
    ref = lode.scores(None, m).values
    assert ref.shape == (n, k)
    for i in range(n):
        if np.isnan(ref[i]).any():
            assert cells[i] == [("error", ERR_NUM)] * k, (i, cells[i])
        else:
            assert all(isinstance(v, float) for v in cells[i]), (i, cells[i])
            assert np.max(np.abs(np.array(cells[i]) - ref[i])) < TOL
    unscored = [i for i in range(n) if isinstance(cells[i][0], tuple)]
    assert unscored == [9, 11]
    # numpy: a complete row is its standardised answers times the weights (standardised with each item's
    # mean and standard deviation over its answered values)
    w = lode.scores(None, m).weights
    z = (x[0] - np.nanmean(x, axis=0)) / np.nanstd(x, axis=0, ddof=1)
    assert np.max(np.abs(z @ w - np.array(cells[0]))) < 1e-9


def test_scores_refuse_a_correlation_matrix_and_bad_options(book, attitude):
    names, x, rng = attitude
    r = np.corrcoef(x, rowvar=False)
    rng_r = book.put(r)
    # scores need the answers: Err:502 even with every other argument valid
    assert book.value(f'=LODE.SCORES({rng_r};2;"ml";"varimax")') == ("error", ERR_INVALID_ARGUMENT)
    assert book.value(f'=LODE.SCORES({rng};2;"ml";"varimax";"no such method")') == ("error", ERR_INVALID_ARGUMENT)
    assert book.value(f'=LODE.SCORES({rng};8)') == ("error", ERR_INVALID_ARGUMENT)  # more factors than items


def test_scores_left_out_factors_use_parallel_analysis(book, judges):
    names, x, rng = judges
    k = int(book.value(f"=LODE.FACTORCOUNT({rng})"))
    assert k >= 1
    cells = book.numbers(f"=LODE.SCORES({rng})", x.shape[0], k)
    m = lode.fit(x, factors=k, method="ml", rotation="oblimin")  # the defaults
    assert np.max(np.abs(cells - lode.scores(None, m).values)) < TOL


# --- LODE.ALPHA ---------------------------------------------------------------------------------------


def _alpha_reference(y):
    """Cronbach (1951) on complete rows, numpy: k/(k-1) (1 - sum of item variances / variance of the
    total); standardised alpha k rbar / (1 + (k-1) rbar) with rbar the mean inter-item correlation."""
    y = y[~np.isnan(y).any(axis=1)]
    k = y.shape[1]
    raw = k / (k - 1) * (1 - y.var(axis=0, ddof=1).sum() / y.sum(axis=1).var(ddof=1))
    r = np.corrcoef(y, rowvar=False)
    rbar = r[np.triu_indices(k, 1)].mean()
    return raw, k * rbar / (1 + (k - 1) * rbar), rbar, y.shape[0]


def test_alpha_matches_numpy_and_c(book, attitude):
    names, x, _ = attitude
    scale = x[:, [0, 1, 2, 5]]  # rating, complaints, privileges, raises
    rng = book.put(scale, [names[i] for i in (0, 1, 2, 5)])
    cells = book.numbers(f"=LODE.ALPHA({rng})", 1, 4)[0]
    ref = _alpha_reference(scale)
    assert np.max(np.abs(cells - np.array(ref))) < 1e-12
    assert cells[0] != cells[1]  # unequal spreads: raw and standardised alpha differ
    a = lode.alpha(scale)
    assert np.max(np.abs(cells - [a.alpha, a.alpha_standardized, a.mean_inter_item_correlation, a.rows_used])) < TOL
    # entered in one cell: the raw alpha
    assert abs(book.value(f"=LODE.ALPHA({rng})") - ref[0]) < 1e-12


def test_alpha_leaves_out_respondents_with_a_missing_item(book, judges):
    names, x, _ = judges
    scale = x[:, 2:8].copy()
    for i, j in [(0, 0), (4, 3), (10, 5), (17, 1), (30, 2)]:
        scale[i, j] = np.nan
    rng = book.put(scale)
    cells = book.numbers(f"=LODE.ALPHA({rng})", 1, 4)[0]
    ref = _alpha_reference(scale)
    assert cells[3] == x.shape[0] - 5
    assert np.max(np.abs(cells - np.array(ref))) < 1e-12


def test_alpha_bad_input(book, attitude):
    names, x, _ = attitude
    assert book.value(f"=LODE.ALPHA({book.put(x[:, :1])})") == ("error", ERR_INVALID_ARGUMENT)  # one item
    constant = x[:, :3].copy()
    constant[:, 1] = 4.0
    assert book.value(f"=LODE.ALPHA({book.put(constant)})") == ("error", ERR_INVALID_ARGUMENT)
    r = np.corrcoef(x, rowvar=False)
    assert book.value(f"=LODE.ALPHA({book.put(r)})") == ("error", ERR_INVALID_ARGUMENT)  # not answers


# --- LODE.OMEGA ---------------------------------------------------------------------------------------


def test_omega_matches_factanal_and_c(book, judges):
    """McDonald (1999): omega = (sum of loadings)^2 / ((sum of loadings)^2 + sum of uniquenesses) from a
    one-factor fit; reference loadings and uniquenesses from R's stats::factanal (maximum likelihood),
    the formula in numpy."""
    names, x, _ = judges
    scale = x[:, 4:10]
    rng = book.put(scale)
    omega = book.value(f"=LODE.OMEGA({rng})")
    ref = run_r('f <- factanal(X, factors = 1); emit("L", unclass(f$loadings)); emit("u", f$uniquenesses)',
                {"X": scale})
    s = np.abs(ref["L"][:, 0]).sum()
    assert abs(omega - s * s / (s * s + ref["u"][:, 0].sum())) < 1e-4  # factanal's optimiser stops near 1e-4
    o = lode.omega(X=scale)
    assert o.converged
    assert abs(omega - o.omega[0]) < TOL
    # the same scale given as its correlation matrix (numpy.corrcoef): the same omega
    rng_r = book.put(np.corrcoef(scale, rowvar=False))
    assert abs(book.value(f"=LODE.OMEGA({rng_r})") - omega) < 1e-9


def test_omega_with_missing_answers_uses_pairwise_correlations(book, attitude):
    names, x, _ = attitude
    scale = x[:, [0, 1, 2, 5]].copy()
    for i, j in [(1, 0), (6, 3), (13, 2)]:
        scale[i, j] = np.nan
    omega = book.value(f"=LODE.OMEGA({book.put(scale)})")
    assert abs(omega - lode.omega(X=scale, missing="pairwise").omega[0]) < TOL


def test_omega_bad_input(book, attitude):
    names, x, _ = attitude
    assert book.value(f"=LODE.OMEGA({book.put(x[:, :1])})") == ("error", ERR_INVALID_ARGUMENT)
    assert book.value(f"=LODE.OMEGA({book.put(x[:, :2])})") == ("error", ERR_INVALID_ARGUMENT)  # not identified


# --- LODE.CONGRUENCE ------------------------------------------------------------------------------------


def _tucker(a, b):
    """Tucker (1951): sum(a b) / sqrt(sum a^2 sum b^2) for every pair of columns (numpy)."""
    return (a.T @ b) / np.sqrt(np.outer((a ** 2).sum(axis=0), (b ** 2).sum(axis=0)))


@pytest.fixture(scope="module")
def harman():
    return run_r('emit("R", Harman74.cor$cov)')["R"]


def test_congruence_matches_numpy_after_matching(book, harman):
    """Two solutions of the same items: maximum likelihood varimax and minimum residual oblimin loadings
    of Harman's (1976) 24 psychological tests (R datasets::Harman74.cor, n = 145, 4 factors), the second
    with its columns shuffled and one reflected. Reference: Tucker's coefficients in numpy and the best
    one-to-one matching by brute force over all permutations."""
    k = 4
    a = lode.fit(corr=harman, n_obs=145, factors=k, method="ml", rotation="varimax").loadings
    b0 = lode.fit(corr=harman, n_obs=145, factors=k, method="minres", rotation="oblimin").loadings
    perm, signs = [2, 0, 3, 1], np.array([1.0, -1.0, 1.0, 1.0])
    b = b0[:, perm] * signs
    rng_a, rng_b = book.put(a), book.put(b)
    cells = book.numbers(f"=LODE.CONGRUENCE({rng_a};{rng_b})", k, 3)
    c = _tucker(a, b)
    best = max(itertools.permutations(range(k)), key=lambda q: sum(abs(c[j, q[j]]) for j in range(k)))
    assert sorted(best) == list(range(k)) and any(best[j] != j for j in range(k))  # the shuffle is undone
    for j in range(k):
        assert abs(cells[j, 0] - abs(c[j, best[j]])) < 1e-12
        assert cells[j, 1] == best[j] + 1
        assert cells[j, 2] == np.sign(c[j, best[j]])
    assert 0.85 < cells[:, 0].min() <= cells[:, 0].max() <= 1.0  # two fits of one structure agree
    cmp = lode.congruence(a, b)
    assert np.max(np.abs(cells[:, 0] - cmp.matched_congruence)) < TOL
    assert np.array_equal(cells[:, 1], cmp.order + 1) and np.array_equal(cells[:, 2], cmp.signs)
    # a matrix compared with itself: every factor matches itself with congruence 1
    same = book.numbers(f"=LODE.CONGRUENCE({rng_a};{rng_a})", k, 3)
    assert np.max(np.abs(same[:, 0] - 1)) < 1e-12
    assert list(same[:, 1]) == list(range(1, k + 1)) and list(same[:, 2]) == [1] * k


def test_congruence_bad_input(book, harman):
    a = lode.fit(corr=harman, n_obs=145, factors=3, method="ml", rotation="varimax").loadings
    rng_a = book.put(a)
    # mismatched shapes: fewer factors, fewer items
    assert book.value(f"=LODE.CONGRUENCE({rng_a};{book.put(a[:, :2])})") == ("error", ERR_INVALID_ARGUMENT)
    assert book.value(f"=LODE.CONGRUENCE({rng_a};{book.put(a[:-1])})") == ("error", ERR_INVALID_ARGUMENT)
    # a factor with only zero loadings: congruence undefined
    z = a.copy()
    z[:, 1] = 0.0
    assert book.value(f"=LODE.CONGRUENCE({rng_a};{book.put(z)})") == ("error", ERR_INVALID_ARGUMENT)
    # a gap in the loadings
    g = a.copy()
    g[3, 0] = np.nan
    assert book.value(f"=LODE.CONGRUENCE({rng_a};{book.put(g)})") == ("error", ERR_INVALID_ARGUMENT)
    # a single item compares nothing
    one = book.put(a[:1])
    assert book.value(f"=LODE.CONGRUENCE({one};{one})") == ("error", ERR_INVALID_ARGUMENT)
