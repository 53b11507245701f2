"""lode.scores, lode.alpha, lode.omega and lode.congruence against R's stats::factanal (scores and
one-factor loadings), formulas computed here with numpy, and published identities."""

import numpy as np
import pytest

import lode
from refs import run_r, survey

_CTL = "ctl <- list(nstart = 1, lower = 0.005, opt = list(factr = 1, pgtol = 0, maxit = 10000))"


def _match(loadings, ref):
    order = [int(np.argmax(np.abs(loadings.T @ ref[:, j]))) for j in range(ref.shape[1])]
    signs = np.sign(np.sum(loadings[:, order] * ref, axis=0))
    return order, signs


def test_regression_and_bartlett_scores_match_factanal():
    x = survey(300, 6, seed=31, factors=2, loading=0.75)
    m = lode.fit(x, factors=2, method="ml", rotation="none", tolerance=1e-12)
    # Reference: R's stats::factanal(scores = "regression" / "Bartlett") on the same data, unrotated
    # (factanal's varimax stops at eps = 1e-5, which would move its scores by about 1e-2). Both
    # programs reach the same ML loadings (checked first), so the scores are computed from the same
    # loadings and uniquenesses.
    ref = run_r(_CTL + """
        f <- factanal(X, factors = 2, rotation = "none", scores = "regression", control = ctl)
        emit("reg", f$scores); emit("l", unclass(f$loadings)); emit("u", f$uniquenesses)
        g <- factanal(X, factors = 2, rotation = "none", scores = "Bartlett", control = ctl)
        emit("bart", g$scores)
    """, X=x)
    order, signs = _match(m.loadings, ref["l"])
    assert np.max(np.abs(m.loadings[:, order] * signs - ref["l"])) < 1e-4
    assert np.max(np.abs(m.uniquenesses - ref["u"].ravel())) < 1e-4
    for method, key in (("regression", "reg"), ("bartlett", "bart")):
        s = lode.scores(None, m, method)
        got = s.values[:, order] * signs
        assert np.max(np.abs(got - ref[key])) < 1e-3, method
        assert "estimates" in s.cautions and "validation" in s.cautions
        assert s.notes[-1] == s.cautions
        assert s.rows_total == 300 and s.rows_complete == 300
    # Passing the same data explicitly gives the same scores.
    assert np.allclose(lode.scores(x, m, "bartlett").values, lode.scores(None, m, "bartlett").values, atol=1e-12)


def test_correlation_preserving_scores_and_determinacy():
    x = survey(400, 8, seed=34, factors=2, loading=0.7)
    m = lode.fit(x, factors=2, method="ml", rotation="oblimin", seed=2)
    s = lode.scores(x, m, "correlation_preserving")
    # the former word for the method is still read, to the same scores
    assert np.array_equal(lode.scores(x, m, "tenberge").values, s.values)
    # ten Berge, Krijnen, Wansbeek & Shapiro (1999): the scores correlate exactly as the factors (Phi).
    assert np.max(np.abs(np.corrcoef(s.values, rowvar=False) - m.factor_correlations)) < 1e-8
    # Determinacy (Guttman 1955; Grice 2001): sqrt(diag(S' R^-1 S)), S = Lambda Phi, with numpy.
    r = np.corrcoef(x, rowvar=False)
    st = m.loadings @ m.factor_correlations
    det = np.sqrt(np.diag(st.T @ np.linalg.solve(r, st)))
    assert np.max(np.abs(s.determinacy - det)) < 1e-10
    # Regression weights R^-1 Lambda Phi (Thurstone 1935), with numpy: validity equals determinacy.
    reg = lode.scores(x, m, "regression")
    assert np.max(np.abs(reg.weights - np.linalg.solve(r, st))) < 1e-10
    assert np.max(np.abs(reg.validity - det)) < 1e-10


def test_listwise_model_scores_standardise_with_the_complete_rows():
    x = survey(400, 8, seed=35, missing=0.05, factors=2, loading=0.7)
    m = lode.fit(x, factors=2, method="ml", rotation="oblimin", seed=3, missing="listwise")
    complete = np.all(np.isfinite(x), axis=1)
    xc = x[complete]
    # numpy: the listwise correlation matrix and the z-scores behind it (complete rows, ddof = 1)
    z = (xc - xc.mean(axis=0)) / xc.std(axis=0, ddof=1)
    r = np.corrcoef(xc, rowvar=False)
    st = m.loadings @ m.factor_correlations
    reg = lode.scores(None, m, "regression")
    # Regression scores Z R^-1 Lambda Phi (Thurstone 1935), computed here with numpy
    assert np.max(np.abs(reg.values[complete] - z @ np.linalg.solve(r, st))) < 1e-10
    # ten Berge, Krijnen, Wansbeek & Shapiro (1999): on the rows behind R the scores correlate as Phi
    tb = lode.scores(None, m, "correlation_preserving")
    assert np.max(np.abs(np.corrcoef(tb.values[complete], rowvar=False) - m.factor_correlations)) < 1e-8
    # The same respondents passed again score the same, and so does any subset of them: every batch is
    # standardised with the fit's means and SDs (here those of the complete rows).
    assert np.array_equal(lode.scores(x.copy(), m, "correlation_preserving").values, tb.values, equal_nan=True)
    other = lode.scores(x[:300], m, "regression").values[complete[:300]]
    z_other = (x[:300][complete[:300]] - xc.mean(axis=0)) / xc.std(axis=0, ddof=1)
    assert np.max(np.abs(other - z_other @ np.linalg.solve(r, st))) < 1e-10


def test_missing_item_rules():
    x = survey(200, 6, seed=35, factors=2, loading=0.75)
    m = lode.fit(x, factors=2, method="ml", rotation="varimax")
    y = x.copy()
    y[0, 1] = np.nan      # one item missing: scored from the answered items
    y[1, :4] = np.nan     # four of six missing: below the half-of-the-items share, left missing
    s = lode.scores(y, m, "regression")
    assert s.rows_partial == 1 and s.rows_missing == 1 and s.rows_complete == 198
    assert np.all(np.isfinite(s.values[0])) and np.all(np.isnan(s.values[1]))
    # The partial row by hand (numpy): regression weights from the submatrices of the answered items,
    # items standardised with the fit's means and sds (n - 1, the data the model was fitted to).
    keep = [0, 2, 3, 4, 5]
    mu, sd = np.nanmean(x, axis=0), np.nanstd(x, axis=0, ddof=1)
    r = np.corrcoef(x, rowvar=False)  # the model's matrix (fitted to the complete x)
    w = np.linalg.solve(r[np.ix_(keep, keep)], m.loadings[keep])
    z = (y[0, keep] - mu[keep]) / sd[keep]
    assert np.max(np.abs(s.values[0] - z @ w)) < 1e-10
    left = lode.scores(y, m, "regression", missing="leave_missing")
    assert left.rows_missing == 2 and np.all(np.isnan(left.values[0]))
    with pytest.raises(lode.LodeError, match="min_answered_share"):
        lode.scores(y, m, min_answered_share=0.0)
    with pytest.raises(ValueError):
        lode.scores(y, m, "nonsense")
    with pytest.raises(lode.LodeError, match="items"):
        lode.scores(x[:, :3], m)


def test_alpha_matches_formula():
    x = survey(250, 5, seed=32, factors=1, loading=0.7)
    a = lode.alpha(x)
    # Cronbach (1951): k/(k-1) (1 - sum of item variances / variance of the total), computed with numpy.
    k = x.shape[1]

    def raw_alpha(d):
        q = d.shape[1]
        return q / (q - 1) * (1 - d.var(axis=0, ddof=1).sum() / d.sum(axis=1).var(ddof=1))

    assert a.alpha == pytest.approx(raw_alpha(x), abs=1e-12)
    assert a.items == k and a.rows_used == 250
    # Standardised alpha is the Spearman-Brown form k rbar / (1 + (k - 1) rbar) of the mean
    # inter-item correlation (numpy's corrcoef).
    r = np.corrcoef(x, rowvar=False)
    rbar = r[~np.eye(k, dtype=bool)].mean()
    assert a.mean_inter_item_correlation == pytest.approx(rbar, abs=1e-12)
    assert a.alpha_standardized == pytest.approx(k * rbar / (1 + (k - 1) * rbar), abs=1e-12)
    # Alpha if deleted (the same formula without item j) and corrected item-total correlations, numpy.
    drop = [raw_alpha(np.delete(x, j, axis=1)) for j in range(k)]
    assert np.max(np.abs(a.alpha_if_deleted - drop)) < 1e-12
    total_minus = x.sum(axis=1, keepdims=True) - x
    itc = [np.corrcoef(x[:, j], total_minus[:, j])[0, 1] for j in range(k)]
    assert np.max(np.abs(a.item_total_correlation - itc)) < 1e-12
    assert np.allclose(a.item_means, x.mean(axis=0)) and np.allclose(a.item_sds, x.std(axis=0, ddof=1))
    # Listwise within the scale: a row with a missing item is left out.
    y = x.copy()
    y[3, 2] = np.nan
    assert lode.alpha(y).alpha == pytest.approx(raw_alpha(np.delete(x, 3, axis=0)), abs=1e-12)
    with pytest.raises(lode.LodeError):
        lode.alpha(x[:, :1])


def _omega_by_formula(loadings, phi, psi, items, f):
    """McDonald (1999) for the sum of `items`, written here with numpy: Sigma = L Phi L' + Psi (the
    model-implied covariances); omega total = 1' (L Phi L')_SS 1 / 1' Sigma_SS 1 (all common factors,
    as in Revelle & Zinbarg 2009); the factor's share = (sum of the items' loadings on f)^2 / 1' Sigma_SS 1."""
    common = loadings @ phi @ loadings.T
    sigma = common + np.diag(psi)
    idx = np.ix_(items, items)
    var = sigma[idx].sum()
    return common[idx].sum() / var, loadings[items, f].sum() ** 2 / var, var


def test_omega_matches_formula():
    x = survey(400, 8, seed=33, factors=2, loading=0.7)
    m = lode.fit(x, factors=2, method="ml", rotation="oblimin", seed=2)
    o = lode.omega(m)
    # Items by largest absolute loading; both omegas from the formulas above.
    assign = np.argmax(np.abs(m.loadings), axis=1)
    assert np.array_equal(o.assignment, assign)
    for f in range(2):
        total, share, var = _omega_by_formula(m.loadings, m.factor_correlations, m.uniquenesses,
                                              np.flatnonzero(assign == f), f)
        assert o.omega[f] == pytest.approx(total, abs=1e-12)
        assert o.factor_share[f] == pytest.approx(share, abs=1e-12)
        assert o.scale_variance[f] == pytest.approx(var, rel=1e-12)
    given = np.array([0, 1, 0, 1, 0, 1, 0, -1])
    og = lode.omega(m, assignment=given)
    total, share, _ = _omega_by_formula(m.loadings, m.factor_correlations, m.uniquenesses, np.flatnonzero(given == 0), 0)
    assert og.omega[0] == pytest.approx(total, abs=1e-12) and og.factor_share[0] == pytest.approx(share, abs=1e-12)
    with pytest.raises(lode.LodeError, match="assigned to factor"):
        lode.omega(m, assignment=[0, 1, 0, 1, 0, 1, 0, 7])


def test_omega_per_factor_on_harman74_oblique():
    # datasets::Harman74.cor (R's datasets; Harman 1976, 24 tests, n = 145), 4 factors, maximum
    # likelihood + oblimin: omega total and each factor's share against the numpy formulas. The
    # scales here have cross-loadings and correlated factors, so the two differ, and the old
    # (sum lambda)^2 / ((sum lambda)^2 + sum psi) is neither.
    r = run_r("emit('r', Harman74.cor$cov)")["r"]
    m = lode.fit(corr=r, n_obs=145, factors=4, method="ml", rotation="oblimin")
    assert m.converged
    o = lode.omega(m)
    assign = np.argmax(np.abs(m.loadings), axis=1)
    assert np.array_equal(o.assignment, assign)
    for f in range(4):
        items = np.flatnonzero(assign == f)
        total, share, var = _omega_by_formula(m.loadings, m.factor_correlations, m.uniquenesses, items, f)
        # Sums of at most 24 x 4 products of numbers below 1: rounding far below 1e-12.
        assert o.omega[f] == pytest.approx(total, abs=1e-12)
        assert o.factor_share[f] == pytest.approx(share, abs=1e-12)
        assert o.scale_variance[f] == pytest.approx(var, rel=1e-12)
        old = o.sum_loadings[f] ** 2 / (o.sum_loadings[f] ** 2 + o.sum_uniquenesses[f])
        assert share < old < total  # the old ratio left cross-loading variance out of the denominator
    assert any("factor's share" in n for n in o.notes)


def test_single_scale_omega_matches_factanal():
    x = survey(300, 5, seed=36, factors=1, loading=0.7)
    o = lode.omega(X=x)
    # Reference: R's stats::factanal one-factor ML loadings and uniquenesses, put into McDonald's
    # (1999) formula here.
    ref = run_r(_CTL + """
        f <- factanal(X, factors = 1, control = ctl)
        emit("l", unclass(f$loadings)); emit("u", f$uniquenesses)
    """, X=x)
    lam, psi = np.abs(ref["l"].ravel()).sum(), ref["u"].ravel().sum()
    assert o.omega.shape == (1,) and o.converged
    assert o.omega[0] == pytest.approx(lam**2 / (lam**2 + psi), abs=1e-5)
    assert o.factor_share[0] == pytest.approx(o.omega[0], abs=1e-15)  # one factor: the two agree
    assert np.max(np.abs(np.abs(o.loadings) - np.abs(ref["l"].ravel()))) < 1e-4
    # The same from the correlation matrix alone.
    oc = lode.omega(corr=np.corrcoef(x, rowvar=False), n_obs=300)
    assert oc.omega[0] == pytest.approx(o.omega[0], abs=1e-9)
    with pytest.raises(ValueError):
        lode.omega()


def test_congruence_against_numpy():
    x = survey(400, 8, seed=33, factors=2, loading=0.7)
    m = lode.fit(x, factors=2, method="ml", rotation="varimax")
    a = m.loadings
    # Tucker (1951): phi(i, j) = a_i'b_j / sqrt(a_i'a_i b_j'b_j), computed with numpy.
    b = a[:, ::-1] * np.array([1.0, -1.0]) + 0.05 * np.random.default_rng(3).standard_normal(a.shape)
    ref = a.T @ b / np.outer(np.linalg.norm(a, axis=0), np.linalg.norm(b, axis=0))
    c = lode.congruence(a, b)
    assert np.max(np.abs(c.congruence - ref)) < 1e-12
    assert list(c.order) == [1, 0] and list(c.signs) == [-1.0, 1.0]
    assert np.allclose(c.matched_congruence, [abs(ref[0, 1]), abs(ref[1, 0])], atol=1e-12)
    assert np.allclose(c.aligned, b[:, [1, 0]] * [-1.0, 1.0], atol=1e-15)
    # Identical solutions up to order and sign: congruence 1.
    same = lode.congruence(a, -a[:, ::-1])
    assert np.allclose(same.matched_congruence, 1.0, atol=1e-12) and np.allclose(same.aligned, a, atol=1e-12)
    with pytest.raises(ValueError):
        lode.congruence(a, a[:, :1])
    bad = b.copy()
    bad[0, 0] = np.nan
    with pytest.raises(lode.LodeError, match="second loading matrix"):
        lode.congruence(a, bad)
