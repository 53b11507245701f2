"""What a careless or unlucky caller can type: missing-value patterns that leave a pair without
rows, huge sample sizes, extreme scales, integers too wide for the library, bad argument types,
numerically singular data, option words with stray spaces, and new respondents scored in batches
of any size. References: numpy and scipy, at ordinary scale."""

import time

import numpy as np
import pytest
from scipy import optimize, stats

import lode
from refs import survey

M = np.nan


def _population_matrix():
    # Two constructs of four items each (loadings 0.7, factor correlation 0.3): a correlation matrix
    # with a non-zero misfit for a one-factor model.
    lam = np.zeros((8, 2))
    lam[:4, 0] = lam[4:, 1] = 0.7
    phi = np.array([[1.0, 0.3], [0.3, 1.0]])
    r = lam @ phi @ lam.T
    np.fill_diagonal(r, 1.0)
    return r


# ---- missing-value patterns ------------------------------------------------------------------------

@pytest.mark.parametrize("method", ["pearson", "spearman", "polychoric"])
def test_items_never_answered_together_are_refused_for_every_kind(method):
    # Items 1-2 answered in rows 1-3, item 3 in rows 4-6: items 1 and 3 share no row (pairwise
    # Spearman crashed here).
    x = np.array([[1, 2, M], [2, 3, M], [3, 1, M], [M, M, 1], [M, M, 2], [M, M, 3]])
    with pytest.raises(lode.LodeError, match="column 1 and column 3 are both answered in only 0 rows"):
        lode.correlation(x, method=method)
    one_shared = np.array([[1, 2, M], [2, 3, M], [3, 1, M], [4, 4, 2], [M, M, 1], [M, M, 2], [M, M, 3]])
    with pytest.raises(lode.LodeError, match="both answered in only 1 rows"):
        lode.correlation(one_shared, method=method)
    whole_missing = np.array([[1, M, 2], [2, M, 3], [3, M, 1], [4, M, 4]])
    with pytest.raises(lode.LodeError, match="column 2 is answered in only 0"):
        lode.correlation(whole_missing, method=method)
    with pytest.raises(lode.LodeError, match="listwise"):
        lode.correlation(x, method=method, missing="listwise")


# ---- sample size -------------------------------------------------------------------------------------

@pytest.mark.parametrize("n_obs", [10 ** 9, 2 ** 63 - 1, 1e9])
def test_rmsea_interval_of_a_huge_sample_is_right_and_quick(n_obs):
    r = _population_matrix()
    start = time.perf_counter()
    m = lode.fit(corr=r, n_obs=n_obs, factors=1, method="ml")
    elapsed = time.perf_counter() - start
    st = m.statistics
    lo, hi = st["rmsea_ci"]
    chi, df = st["chi_square"], st["df"]
    assert df == 20 and chi > 1e8
    scale = df * (float(n_obs) - 1.0)
    assert lo < st["rmsea"] < hi
    if chi < 1e12:
        # Reference: scipy.optimize.brentq on scipy.stats.ncx2.cdf for the noncentrality giving the
        # 5% and 95% points (Steiger & Lind's interval), then sqrt(lambda / (df (n - 1))).
        s = np.sqrt(2 * (df + 2 * chi))
        lam = [optimize.brentq(lambda l, p=p: stats.ncx2.cdf(chi, df, l) - p, chi - df - 20 * s, chi - df + 20 * s,
                               xtol=1e-6, rtol=1e-15) for p in (0.95, 0.05)]
        assert lo == pytest.approx(np.sqrt(lam[0] / scale), rel=1e-9)
        assert hi == pytest.approx(np.sqrt(lam[1] / scale), rel=1e-9)
    else:
        # Beyond scipy's reach: the interval is chi - df -/+ z sd (sd = sqrt(2 (df + 2 lambda))) to within
        # the skewness terms, relative 1e-9 of lambda here (normal quantile from scipy.stats.norm).
        s = np.sqrt(2 * (df + 2 * chi))
        z = stats.norm.ppf(0.95)
        assert lo == pytest.approx(np.sqrt((chi - df - z * s) / scale), rel=1e-9)
        assert hi == pytest.approx(np.sqrt((chi - df + z * s) / scale), rel=1e-9)
    assert elapsed < 5.0  # a generous guard: the work no longer grows with n_obs (about a millisecond)


# ---- extreme scales -----------------------------------------------------------------------------------

def _alpha_numpy(x):
    # Cronbach (1951): k/(k-1) (1 - sum of item variances / variance of the total), numpy.
    k = x.shape[1]
    return k / (k - 1) * (1 - x.var(axis=0, ddof=1).sum() / x.sum(axis=1).var(ddof=1))


@pytest.mark.parametrize("scale", [1e300, 1e-300, 1e-160])
def test_scale_free_results_hold_at_extreme_scales(scale):
    g = survey(150, 6, seed=41, factors=2, loading=0.7)
    a = lode.alpha(g * scale)
    assert a.alpha == pytest.approx(_alpha_numpy(g), abs=1e-12)
    assert np.allclose(a.item_means / scale, g.mean(axis=0), rtol=1e-12)
    c = lode.correlation(g * scale)
    assert np.max(np.abs(c.matrix - np.corrcoef(g, rowvar=False))) < 1e-12
    s = lode.correlation(g * scale, method="spearman")
    assert np.max(np.abs(s.matrix - stats.spearmanr(g).correlation)) < 1e-12


def _varimax_numpy(loadings, eps=1e-12, max_iter=1000):
    # Kaiser (1958) varimax with Kaiser normalisation, by the SVD iteration of R's stats::varimax,
    # written here with numpy.
    h = np.sqrt((loadings ** 2).sum(axis=1))
    x = loadings / h[:, None]
    p, k = x.shape
    t = np.eye(k)
    d = 0.0
    for _ in range(max_iter):
        z = x @ t
        u, sv, vt = np.linalg.svd(x.T @ (z ** 3 - z @ np.diag((z ** 2).sum(axis=0)) / p))
        t = u @ vt
        d_old, d = d, sv.sum()
        if d < d_old * (1 + eps):
            break
    return (x @ t) * h[:, None]


def _same_up_to_order_and_sign(a, b, tol):
    c = lode.congruence(a, b)
    return np.max(np.abs(c.aligned - a)) < tol


def test_rotation_is_right_at_extreme_scales():
    x = survey(400, 8, seed=43, factors=2, loading=0.7)
    unrotated = lode.fit(x, factors=2, method="ml", rotation="none").loadings
    ref = _varimax_numpy(unrotated)
    big = lode.rotate(unrotated * 1e300, "varimax")
    assert big.converged and big.iterations > 0
    # numpy's varimax stops on the criterion's relative change, Lode's on the gradient (1e-6): they
    # agree to about 1e-4 at any scale; at 1e300 Lode gives exactly its ordinary-scale answer.
    assert _same_up_to_order_and_sign(ref, big.loadings / 1e300, 1e-3)
    assert np.max(np.abs(big.loadings / 1e300 - lode.rotate(unrotated, "varimax").loadings)) < 1e-12
    ordinary = lode.rotate(unrotated, "oblimin")
    small = lode.rotate(unrotated * 1e-300, "oblimin")
    # Scale equivariance (loadings scaled, rotation matrix and factor correlations unchanged).
    assert small.converged and small.iterations > 0
    assert np.max(np.abs(small.loadings / 1e-300 - ordinary.loadings)) < 1e-9
    assert np.max(np.abs(small.factor_correlations - ordinary.factor_correlations)) < 1e-9


@pytest.mark.parametrize("scale", [1e300, 1e-160, 1e-300])
def test_congruence_is_right_at_extreme_scales(scale):
    x = survey(300, 6, seed=45, factors=2, loading=0.7)
    a = lode.fit(x, factors=2, method="ml", rotation="varimax").loadings
    b = a + 0.1 * np.random.default_rng(5).standard_normal(a.shape)
    # Tucker (1951) with numpy at ordinary scale.
    ref = a.T @ b / np.outer(np.linalg.norm(a, axis=0), np.linalg.norm(b, axis=0))
    c = lode.congruence(a * scale, b)
    assert np.max(np.abs(c.congruence - ref)) < 1e-12
    assert np.allclose(lode.congruence(a * scale, a).matched_congruence, 1.0, atol=1e-12)


# ---- integers and argument types -------------------------------------------------------------------

def test_integers_too_wide_for_the_library_are_refused_by_name():
    g = survey(200, 6, seed=47, factors=2)
    r = np.corrcoef(g, rowvar=False)
    cases = [
        (lambda: lode.fit(g, factors=2 ** 32 + 2), "factors"),
        (lambda: lode.bootstrap(g, factors=2 ** 32 + 1, replicates=10), "factors"),
        (lambda: lode.fit(corr=r, n_obs=2 ** 64, factors=1), "n_obs"),
        (lambda: lode.bootstrap(g, factors=2, replicates=2 ** 64), "replicates"),
        (lambda: lode.count_factors(g, replicates=2 ** 63), "replicates"),
        (lambda: lode.fit(g, factors=2, seed=2 ** 64), "seed"),
        (lambda: lode.fit(g, factors=2, seed=-1), "seed"),
        (lambda: lode.fit(g, factors=2, max_iterations=2 ** 31), "max_iterations"),
        (lambda: lode.correlation(g, min_pair_observations=2 ** 63), "min_pair_observations"),
        (lambda: lode.rotate(np.ones((6, 2)), "oblimin", random_starts=2 ** 40), "random_starts"),
        (lambda: lode.omega(lode.fit(g, factors=2), assignment=[0, 1, 0, 1, 0, 2 ** 64]), "assignment"),
        (lambda: lode.fit(g, factors=2.5), "factors"),
    ]
    for call, name in cases:
        with pytest.raises(lode.LodeError, match=name) as e:
            call()
        assert e.value.status_name == "invalid argument"


def test_bad_arguments_raise_the_bindings_error_with_a_readable_message():
    g = survey(200, 6, seed=49, factors=2)
    r = np.corrcoef(g, rowvar=False)
    m = lode.fit(g, factors=2)
    cases = [
        (lambda: lode.fit(corr=r, n_obs="abc", factors=1), "n_obs must be a whole number"),
        (lambda: lode.fit(g, factors=None), "factors must be a whole number"),
        (lambda: lode.rotate(m.loadings, "oblimin", gamma="abc"), "gamma must be a number"),
        (lambda: lode.fit({"a": [1, 2]}, factors=1), "X must be a 2-D array of numbers"),
        (lambda: lode.correlation("survey.csv"), "X must be a 2-D array of numbers"),
        (lambda: lode.alpha([[1, "x"], [2, 3]]), "X must be a 2-D array of numbers"),
        (lambda: lode.bootstrap(corr=r, factors=2), "needs their raw data X"),
        (lambda: lode.scores(g, None), "model must be a fitted model"),
        (lambda: lode.item_flags("model"), "model must be a fitted model"),
        (lambda: lode.correlation(g, method=3), "unknown correlation method"),
        (lambda: lode.fit(g, factors=2, rotation="varimax", gama=0.1), "unexpected keyword"),
    ]
    for call, fragment in cases:
        with pytest.raises(lode.LodeError, match=fragment):
            call()


def test_option_words_ignore_surrounding_white_space():
    g = survey(200, 6, seed=51, factors=2)
    plain = lode.correlation(g, method="spearman", missing="pairwise").matrix
    assert np.array_equal(lode.correlation(g, method=" spearman", missing="pairwise \t").matrix, plain)
    m = lode.fit(g, factors=2, method=" ml ", rotation="\tvarimax ")
    assert m.rotation == "varimax"
    with pytest.raises(lode.LodeError, match="unknown correlation method"):
        lode.correlation(g, method="spear man")


# ---- singular data ------------------------------------------------------------------------------------

def test_an_item_that_is_the_sum_of_two_others_is_refused_where_a_full_rank_matrix_is_needed():
    rng = np.random.default_rng(53)
    x = rng.standard_normal((300, 5)) + rng.standard_normal((300, 1))
    x = np.column_stack([x, x[:, 0] + x[:, 1]])
    # numpy: the correlation matrix is singular to rounding (smallest eigenvalue at the level of
    # machine epsilon times the largest).
    ev = np.linalg.eigvalsh(np.corrcoef(x, rowvar=False))
    assert ev[0] < 6 * np.finfo(float).eps * ev[-1]
    c = lode.correlation(x)
    assert not c.positive_definite
    with pytest.raises(lode.LodeError, match="positive-definite") as e:
        lode.fit(x, factors=2, method="ml")
    assert e.value.status_name == "not positive definite"
    f = lode.factorability(x)
    assert f.kmo is None


# ---- scores of new respondents ---------------------------------------------------------------------

def test_a_respondent_scores_the_same_in_any_batch():
    x = survey(200, 6, seed=55, factors=2, loading=0.75)
    m = lode.fit(x, factors=2, method="ml", rotation="oblimin", seed=1)
    new = survey(200, 6, seed=57, factors=2, loading=0.75)
    # numpy: z with the fit's means and SDs (n - 1), regression weights R^-1 Lambda Phi (Thurstone 1935).
    r = np.corrcoef(x, rowvar=False)
    z = (new - x.mean(axis=0)) / x.std(axis=0, ddof=1)
    ref = z @ np.linalg.solve(r, m.loadings @ m.factor_correlations)
    alone = lode.scores(new[:1], m).values
    among5 = lode.scores(new[:5], m).values
    among200 = lode.scores(new, m).values
    assert np.max(np.abs(alone[0] - ref[0])) < 1e-10
    assert np.array_equal(alone[0], among5[0]) and np.array_equal(alone[0], among200[0])
    assert np.max(np.abs(among200 - ref)) < 1e-10
    # The fit's own respondents score as before: their own means and SDs are the fit's.
    assert np.max(np.abs(lode.scores(None, m).values - lode.scores(x, m).values)) == 0.0
