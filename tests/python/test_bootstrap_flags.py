"""lode.bootstrap, lode.item_flags and the progress of lode.fit checked against numpy
(numpy.percentile for the percentile intervals, the documented flag rules recomputed from the returned
loadings), scipy (scipy.optimize.linear_sum_assignment for the alignment of replicates) and an
independent bootstrap of a one-factor maximum likelihood model with scikit-learn's FactorAnalysis."""

import ctypes

import numpy as np
import pytest
from scipy.optimize import linear_sum_assignment

import lode
from lode import _native
from refs import survey


def _two_constructs(n, seed):
    """Nine items on two correlated constructs (invented for the test): items 1-4 on the first,
    5-8 on the second, item 9 on both (a cross-loading by construction) and item 10 weakly on the first."""
    rng = np.random.default_rng(seed)
    f = rng.multivariate_normal([0, 0], [[1, 0.3], [0.3, 1]], size=n)
    lam = np.array([[.75, 0], [.7, 0], [.65, 0], [.6, 0], [0, .75], [0, .7], [0, .65], [0, .6], [.5, .45], [.3, 0]])
    common = f @ lam.T
    unique = np.sqrt(np.clip(1 - np.sum((lam @ [[1, 0.3], [0.3, 1]]) * lam, axis=1), 0.05, None))
    return common + rng.standard_normal((n, lam.shape[0])) * unique


# ---- bootstrap ----------------------------------------------------------------------------------------

@pytest.fixture(scope="module")
def kept():
    x = _two_constructs(300, seed=41)
    return x, lode.bootstrap(x, factors=2, method="ml", rotation="oblimin", replicates=150, seed=5,
                             keep_replicates=True)


def test_percentile_intervals_match_numpy(kept):
    _, b = kept
    assert b.replicates == 150 and b.replicates_used + b.replicates_failed == 150
    assert b.replicates_used == b.replicate_loadings.shape[0] >= 140
    # Reference: numpy.percentile (method "linear", Hyndman & Fan's type 7, which the core documents)
    # over the kept aligned replicates, and numpy.std with ddof=1 for the standard errors.
    for reps, lower, upper, se in ((b.replicate_loadings, b.loadings_lower, b.loadings_upper, b.loadings_se),
                                   (b.replicate_uniquenesses, b.uniquenesses_lower, b.uniquenesses_upper,
                                    b.uniquenesses_se),
                                   (b.replicate_factor_correlations, b.factor_correlations_lower,
                                    b.factor_correlations_upper, b.factor_correlations_se)):
        lo, hi = np.percentile(reps, [2.5, 97.5], axis=0, method="linear")
        assert np.max(np.abs(lo - lower)) < 1e-12
        assert np.max(np.abs(hi - upper)) < 1e-12
        assert np.max(np.abs(reps.std(axis=0, ddof=1) - se)) < 1e-12


def test_replicates_are_aligned_by_congruence(kept):
    _, b = kept
    full = b.loadings
    smallest = []
    for rep in b.replicate_loadings:
        # Tucker's congruence (Tucker 1951) with numpy; the best one-to-one matching by
        # scipy.optimize.linear_sum_assignment (maximising total |congruence|) must be the identity, and
        # every matched congruence non-negative: the replicate is already permuted and reflected.
        c = (full.T @ rep) / np.sqrt(np.outer(np.sum(full**2, axis=0), np.sum(rep**2, axis=0)))
        rows, cols = linear_sum_assignment(-np.abs(c))
        best = np.abs(c[rows, cols]).sum()
        assert np.abs(np.diag(c)).sum() >= best - 1e-12
        assert np.all(np.diag(c) >= 0)
        smallest.append(np.diag(c).min())
    assert np.max(np.abs(np.array(smallest) - b.min_congruence)) < 1e-12
    assert b.replicates_poorly_matched == int(np.sum(np.array(smallest) < 0.85))
    assert "congruence" in b.alignment and any("Alignment" in n for n in b.notes)


def test_estimates_are_the_fit_and_intervals_hold_them(kept):
    x, b = kept
    m = lode.fit(x, factors=2, method="ml", rotation="oblimin", seed=5)
    assert np.max(np.abs(b.loadings - m.loadings)) < 1e-12
    assert np.max(np.abs(b.uniquenesses - m.uniquenesses)) < 1e-12
    assert np.max(np.abs(b.factor_correlations - m.factor_correlations)) < 1e-12
    assert b.oblique and b.level == 0.95
    # Intervals hold the full-sample estimate for every salient loading and uniqueness (the
    # percentile interval need not hold it in general: this is a check on this well-determined case).
    salient = np.abs(b.loadings) >= 0.4
    assert np.all((b.loadings_lower <= b.loadings)[salient] & (b.loadings <= b.loadings_upper)[salient])
    assert np.all((b.uniquenesses_lower <= b.uniquenesses) & (b.uniquenesses <= b.uniquenesses_upper))
    inside = (b.loadings_lower <= b.loadings) & (b.loadings <= b.loadings_upper)
    assert inside.mean() >= 0.9
    # The factor correlation interval is symmetric and holds the estimate.
    assert b.factor_correlations_lower[0, 1] < b.factor_correlations[0, 1] < b.factor_correlations_upper[0, 1]
    assert b.factor_correlations_lower[0, 1] == pytest.approx(b.factor_correlations_lower[1, 0], abs=1e-12)


def test_seeds_threads_and_level():
    x = survey(200, 6, seed=52, factors=2, loading=0.7)
    kw = dict(factors=2, method="minres", rotation="varimax", replicates=60)
    a = lode.bootstrap(x, seed=3, threads=1, **kw)
    b = lode.bootstrap(x, seed=3, threads=2, **kw)
    c = lode.bootstrap(x, seed=4, **kw)
    for name in ("loadings_lower", "loadings_upper", "loadings_se", "uniquenesses_lower", "min_congruence"):
        assert np.array_equal(getattr(a, name), getattr(b, name)), name
    assert not np.array_equal(a.loadings_lower, c.loadings_lower)
    assert np.array_equal(a.loadings, c.loadings)  # the full-sample solution does not depend on the seed
    # Orthogonal: the identity with zero-width intervals.
    assert not a.oblique
    assert np.array_equal(a.factor_correlations, np.eye(2))
    assert np.allclose(a.factor_correlations_lower, np.eye(2), atol=1e-12)
    assert a.replicate_loadings is None
    # A narrower level gives nested intervals from the same replicates.
    n = lode.bootstrap(x, seed=3, level=0.5, **kw)
    assert np.all(n.loadings_lower >= a.loadings_lower - 1e-15) and np.all(n.loadings_upper <= a.loadings_upper + 1e-15)
    assert np.array_equal(n.loadings_se, a.loadings_se)


def test_one_factor_standard_errors_agree_with_a_scikit_learn_bootstrap():
    x = survey(300, 6, seed=61, factors=1, loading=0.65)
    b = lode.bootstrap(x, factors=1, method="ml", replicates=400, seed=9, tolerance=1e-10)
    # Reference: scikit-learn's FactorAnalysis (maximum likelihood; on items standardised with the
    # population standard deviation its covariance is the correlation matrix), first on the full sample,
    # then on 300 resamples of our own (numpy's default_rng), reflected to the full-sample direction.
    from sklearn.decomposition import FactorAnalysis

    def one_factor(data):
        z = (data - data.mean(axis=0)) / data.std(axis=0)
        fa = FactorAnalysis(n_components=1, tol=1e-10, max_iter=100000, svd_method="lapack").fit(z)
        return fa.components_[0]

    full = one_factor(x)
    full *= np.sign(full @ b.loadings[:, 0])
    assert np.max(np.abs(full - b.loadings[:, 0])) < 1e-4
    rng = np.random.default_rng(2024)
    reps = []
    for _ in range(300):
        l = one_factor(x[rng.integers(0, len(x), len(x))])
        reps.append(l * np.sign(l @ full))
    reps = np.array(reps)
    se = reps.std(axis=0, ddof=1)
    # Two bootstraps of 300-400 replicates estimate the same standard errors with a Monte Carlo error of
    # about 4-5% each: they must agree within 30%, and the interval midpoints within one standard error.
    assert np.max(np.abs(b.loadings_se[:, 0] / se - 1)) < 0.30
    lo, hi = np.percentile(reps, [2.5, 97.5], axis=0)
    assert np.max(np.abs((b.loadings_lower[:, 0] + b.loadings_upper[:, 0]) / 2 - (lo + hi) / 2) / se) < 1.0


def test_bootstrap_progress_cancel_and_errors():
    x = survey(150, 6, seed=71, factors=2)
    seen = []
    b = lode.bootstrap(x, factors=2, replicates=30, seed=1, progress=lambda d, t: seen.append((d, t)))
    assert seen[0] == (0, 30) and seen[-1] == (30, 30)
    assert all(0 <= d <= t == 30 for d, t in seen)
    assert all(seen[i][0] <= seen[i + 1][0] for i in range(len(seen) - 1))
    assert b.replicates_used + b.replicates_failed == 30
    assert (b.failures == []) == (b.replicates_failed == 0)
    with pytest.raises(lode.LodeError) as e:
        lode.bootstrap(x, factors=2, replicates=5000, progress=lambda d, t: False)
    assert e.value.status_name == "cancelled"

    def broken(done, total):
        raise RuntimeError("a callback that fails cancels")

    with pytest.raises(lode.LodeError) as e:
        lode.bootstrap(x, factors=2, replicates=5000, progress=broken)
    assert e.value.status_name == "cancelled"
    with pytest.raises(ValueError, match="number of factors"):
        lode.bootstrap(x, factors=0)
    with pytest.raises(lode.LodeError, match="replicates must be between 2"):
        lode.bootstrap(x, factors=2, replicates=1)
    with pytest.raises(lode.LodeError, match="level"):
        lode.bootstrap(x, factors=2, replicates=10, level=1.5)
    with pytest.raises(lode.LodeError, match="raw data"):
        lode.bootstrap(lode.correlation(corr=np.corrcoef(x, rowvar=False), n_obs=150), factors=2, replicates=10)
    with pytest.raises(lode.LodeError, match="did not converge"):
        lode.bootstrap(x, factors=2, replicates=10, max_iterations=1)
    with pytest.raises(TypeError, match="bootstrap"):
        lode.bootstrap(x, factors=2, replicates=10, rotation="oblimin", gama=0.1)
    # A Correlation of raw data is accepted and gives the same result as the data.
    c = lode.correlation(x)
    same = lode.bootstrap(c, factors=2, replicates=30, seed=1)
    assert np.array_equal(same.loadings_upper, b.loadings_upper)


# ---- item flags ---------------------------------------------------------------------------------------

def _flags_by_rule(loadings, uniquenesses, salient, gap, low, heywood):
    """The rules documented in item_flags.hpp / lode.h, recomputed with numpy: per item the OR of
    1 cross-loading, 2 no salient loading, 4 low communality, 8 Heywood case."""
    codes = np.zeros(len(loadings), dtype=np.int64)
    for i, row in enumerate(loadings):
        order = np.argsort(-np.abs(row), kind="stable")
        l1 = abs(row[order[0]])
        if l1 < salient:
            codes[i] |= 2
        elif len(row) > 1:
            l2 = abs(row[order[1]])
            if l2 >= salient or l1 - l2 < gap:
                codes[i] |= 1
        psi = uniquenesses[i]
        if psi < 0 or psi <= heywood + 1e-12:
            codes[i] |= 8
        if 1 - psi < low:
            codes[i] |= 4
    return codes


@pytest.mark.parametrize("thresholds", [
    dict(),
    dict(salient=0.55, cross_gap=0.30, low_communality=0.40),
    dict(salient=0.30, cross_gap=0.05, low_communality=0.10, heywood_uniqueness=0.45),
])
def test_item_flags_follow_the_documented_rules(thresholds):
    x = _two_constructs(500, seed=81)
    m = lode.fit(x, factors=2, method="ml", rotation="oblimin", seed=1)
    f = lode.item_flags(m, **thresholds)
    t = dict(salient=0.40, cross_gap=0.20, low_communality=0.20, heywood_uniqueness=0.005)
    t.update(thresholds)
    assert f.thresholds == pytest.approx(t)
    expected = _flags_by_rule(m.loadings, m.uniquenesses, t["salient"], t["cross_gap"], t["low_communality"],
                              t["heywood_uniqueness"])
    assert np.array_equal(f.codes, expected)
    assert np.allclose(f.communalities, 1 - m.uniquenesses, atol=1e-15)
    assert f.count == len(f.table) == sum(bin(c).count("1") for c in expected)
    assert f.items_flagged == int(np.count_nonzero(expected))
    for row in f.table:
        i = row["item"]
        assert row["note"] in f.notes[i] and row["kind"] in f.by_item[i]
        if row["kind"] == "cross_loading":
            a, b = row["factors"]
            assert abs(m.loadings[i, a]) >= abs(m.loadings[i, b]) and row["value"] == m.loadings[i, b]
            assert "common practice" in row["note"]
        elif row["kind"] == "no_salient_loading":
            assert row["value"] == m.loadings[i, row["factors"][0]] and "common practice" in row["note"]
        elif row["kind"] == "low_communality":
            assert row["value"] == pytest.approx(1 - m.uniquenesses[i], abs=1e-12)
    for i, c in enumerate(expected):
        assert (len(f.notes[i]) == 0) == (c == 0)
    # The model's method says the same.
    assert np.array_equal(m.item_flags(**thresholds).codes, f.codes)


def test_item_flags_find_the_planted_items_and_refuse_bad_thresholds():
    x = _two_constructs(800, seed=82)
    m = lode.fit(x, factors=2, method="ml", rotation="oblimin", seed=1)
    f = lode.item_flags(m)
    # Item 9 was planted on both constructs (.50/.45) and item 10 weakly (.30) on one: with the
    # common-practice defaults the first cross-loads and the second has no salient loading and a low
    # communality (population communality .09).
    assert "cross_loading" in f.by_item[8]
    assert set(f.by_item[9]) == {"no_salient_loading", "low_communality"}
    assert all(f.codes[:8] == 0)
    for bad in (dict(salient=1.2), dict(cross_gap=-0.1), dict(low_communality=float("nan"))):
        with pytest.raises(lode.LodeError, match="thresholds must lie in"):
            lode.item_flags(m, **bad)


# ---- progress of lode.fit -----------------------------------------------------------------------------

def test_fit_progress_counts_extraction_and_starts_and_cancels():
    x = survey(300, 8, seed=91, factors=2)
    plain = lode.fit(x, factors=2, rotation="geomin", random_starts=6, seed=2)
    seen = []
    m = lode.fit(x, factors=2, rotation="geomin", random_starts=6, seed=2, progress=lambda d, t: seen.append((d, t)))
    assert np.array_equal(m.loadings, plain.loadings)
    assert m.rotation_starts == 7
    assert seen[0] == (0, 8) and seen[1] == (1, 8) and seen[-1] == (8, 8)
    assert all(0 <= d <= t == 8 for d, t in seen)
    with pytest.raises(lode.LodeError) as e:
        lode.fit(x, factors=2, rotation="geomin", progress=lambda d, t: d < 1)
    assert e.value.status_name == "cancelled"
    # With factors=0 the factor count reports first (its replicates), then the fit.
    seen.clear()
    lode.fit(x, factors=0, replicates=50, seed=1, rotation="none", progress=lambda d, t: seen.append((d, t)))
    assert (50, 50) in seen and seen[-1] == (1, 1)


def test_shorter_fit_options_are_still_accepted():
    # A caller built against a header whose lode_model_options ended before the progress fields passes
    # the shorter struct; the library must not read them (here: a callback that would cancel at once).
    c = lode.correlation(survey(200, 6, seed=92, factors=2))
    o = _native.options("lode_model_options", factors=2)
    calls = []
    cb = _native.make_progress(lambda d, t: calls.append(d) or False)
    o.progress = cb
    ptr = ctypes.c_void_p()
    with pytest.raises(lode.LodeError, match="cancelled"):
        _native.check(lode.lib.lode_model_compute(c.pointer, ctypes.byref(o), ctypes.byref(ptr)))
    o.struct_size = _native.FIT_OPTIONS_SIZE_WITHOUT_PROGRESS
    calls.clear()
    _native.check(lode.lib.lode_model_compute(c.pointer, ctypes.byref(o), ctypes.byref(ptr)))
    lode.lib.lode_model_free(ptr)
    assert calls == []
    assert lode.version()["abi"][0] == 2
