"""lode.fit_pattern against an independent minimisation of the ML discrepancy written here with
scipy.optimize on R's datasets (Harman74.cor, ability.cov), a population structure recovered exactly,
standard errors against a numerical second derivative, the fit indices recomputed from their
definitions with scipy.stats; lode.replicate and lode.holdout_check on simulated data; bad input."""

import numpy as np
import pytest
from scipy import optimize, stats

import lode
from refs import run_r


def r_dataset(expr):
    return run_r(f"emit('r', {expr})")["r"]


# ---- an independent restricted ML fit ------------------------------------------------------------------

class Reference:
    """The restricted model's ML discrepancy F = log|S| - log|R| + tr(S^-1 R) - p, S = L Phi L' + diag(u),
    over the free loadings (pattern 1s, column by column), the factor correlations (upper triangle, row
    by row) and the uniquenesses, with its gradient, minimised by scipy's L-BFGS-B (uniquenesses kept at
    or above 0.005, as in Lode) and polished by BFGS."""

    def __init__(self, r, pattern):
        self.r, self.pattern = r, np.asarray(pattern, dtype=float)
        self.p, self.k = self.pattern.shape
        self.free = np.argwhere(self.pattern.T == 1)[:, ::-1]  # (item, factor), factor-major
        self.pairs = [(f, g) for f in range(self.k) for g in range(f + 1, self.k)]
        self.logdet_r = np.linalg.slogdet(r)[1]

    def unpack(self, t):
        lam = np.zeros((self.p, self.k))
        nl = len(self.free)
        lam[self.free[:, 0], self.free[:, 1]] = t[:nl]
        phi = np.eye(self.k)
        for i, (f, g) in enumerate(self.pairs):
            phi[f, g] = phi[g, f] = t[nl + i]
        return lam, phi, t[nl + len(self.pairs):]

    def F(self, t):
        lam, phi, psi = self.unpack(t)
        s = lam @ phi @ lam.T + np.diag(psi)
        sign, logdet = np.linalg.slogdet(s)
        if sign <= 0:
            return 1e10
        return logdet - self.logdet_r + np.trace(np.linalg.solve(s, self.r)) - self.p

    def gradient(self, t):
        lam, phi, psi = self.unpack(t)
        w = np.linalg.inv(lam @ phi @ lam.T + np.diag(psi))
        m = w - w @ self.r @ w
        g_lam = 2 * m @ lam @ phi
        g_phi = 2 * lam.T @ m @ lam
        return np.concatenate([g_lam[self.free[:, 0], self.free[:, 1]], [g_phi[f, g] for f, g in self.pairs],
                               np.diag(m)])

    def fit(self):
        t0 = np.concatenate([np.full(len(self.free), 0.6), np.full(len(self.pairs), 0.3), np.full(self.p, 0.5)])
        bounds = [(None, None)] * (len(self.free) + len(self.pairs)) + [(0.005, None)] * self.p
        res = optimize.minimize(self.F, t0, jac=self.gradient, method="L-BFGS-B", bounds=bounds,
                                options={"maxiter": 100000, "maxfun": 100000, "ftol": 1e-16, "gtol": 1e-12})
        res = optimize.minimize(self.F, res.x, jac=self.gradient, method="BFGS", options={"gtol": 1e-11, "maxiter": 10000})
        return res.x


def lode_theta(f, ref):
    return np.concatenate([f.loadings[ref.free[:, 0], ref.free[:, 1]],
                           [f.factor_correlations[a, b] for a, b in ref.pairs], f.uniquenesses])


HARMAN_PATTERN = np.zeros((24, 5))
# datasets::Harman74.cor (Holzinger & Swineford's 24 tests, n = 145), five groups stated here: spatial
# (tests 1-4), verbal (5-9), speed (10-13), memory (14-19), reasoning and arithmetic (20-24).
for f, (a, b) in enumerate([(0, 4), (4, 9), (9, 13), (13, 19), (19, 24)]):
    HARMAN_PATTERN[a:b, f] = 1
# datasets::ability.cov (n = 112): picture, blocks, maze on one factor; general, reading, vocab on the other.
ABILITY_PATTERN = np.array([[0, 1], [1, 0], [1, 0], [1, 0], [0, 1], [0, 1]], dtype=float)


@pytest.mark.parametrize("expr,n,pattern", [("Harman74.cor$cov", 145, HARMAN_PATTERN),
                                            ("cov2cor(ability.cov$cov)", 112, ABILITY_PATTERN)])
def test_fit_pattern_matches_an_independent_scipy_minimisation(expr, n, pattern):
    r = r_dataset(expr)
    ref = Reference(r, pattern)
    theta = ref.fit()
    assert np.max(np.abs(ref.gradient(theta))) < 1e-7, "the reference did not reach its optimum"
    f = lode.fit_pattern(corr=r, n_obs=n, pattern=pattern)
    assert f.converged and not f.heywood.any()
    # Both sides stop with gradients below 1e-7; divided by the Hessian's smallest eigenvalue (about
    # 0.02 and more here) that moves the parameters by under 1e-5, the bound.
    assert np.max(np.abs(lode_theta(f, ref) - theta)) < 1e-5
    assert np.all(f.loadings[pattern == 0] == 0)
    fmin = ref.F(theta)
    s = f.statistics
    # F is flat at the optimum: its value agrees to the square of the parameter error.
    assert s["chi_square"] == pytest.approx((n - 1) * fmin, rel=1e-6)
    p, k = pattern.shape
    df = p * (p + 1) / 2 - (pattern.sum() + k * (k - 1) / 2 + p)
    assert s["df"] == df
    # The fit indices from their definitions (scipy.stats for the distributions).
    chi, null = (n - 1) * fmin, -(n - 1) * ref.logdet_r
    null_df = p * (p - 1) / 2
    assert s["null_chi_square"] == pytest.approx(null, rel=1e-12)
    assert s["p_value"] == pytest.approx(stats.chi2.sf(chi, df), rel=1e-5)
    assert s["cfi"] == pytest.approx(1 - max(chi - df, 0) / max(null - null_df, chi - df, 0), rel=1e-6)
    assert s["tli"] == pytest.approx((null / null_df - chi / df) / (null / null_df - 1), rel=1e-6)
    assert s["rmsea"] == pytest.approx(np.sqrt(max(chi - df, 0) / (df * (n - 1))), rel=1e-5, abs=1e-9)
    assert s["bic"] == pytest.approx(chi - df * np.log(n), rel=1e-6)
    # RMSEA interval (Browne & Cudeck 1993): the noncentralities where the noncentral chi-square's cdf at
    # chi is 0.95 and 0.05, found here with scipy.stats.ncx2 and brentq.
    def bound(q):
        if stats.chi2.cdf(chi, df) < q:
            return 0.0
        return np.sqrt(optimize.brentq(lambda lam: stats.ncx2.cdf(chi, df, lam) - q, 1e-12, 10 * chi + 100,
                                       xtol=1e-12) / (df * (n - 1)))
    lo, hi = s["rmsea_ci"]
    assert lo == pytest.approx(bound(0.95), abs=1e-6)
    assert hi == pytest.approx(bound(0.05), abs=1e-6)
    # SRMR: correlation scale, lower triangle with the diagonal.
    lam, phi, psi = ref.unpack(theta)
    sigma = lam @ phi @ lam.T + np.diag(psi)
    d = np.sqrt(np.diag(sigma))
    resid = r - sigma / np.outer(d, d)
    assert s["srmr"] == pytest.approx(np.sqrt(np.mean(resid[np.tril_indices(p)] ** 2)), rel=1e-5)


def test_a_population_structure_is_recovered_exactly():
    lam = np.zeros((9, 3))
    lam[0:3, 0], lam[3:6, 1], lam[6:9, 2] = [0.8, 0.7, 0.6], [0.75, 0.65, 0.5], [0.7, 0.6, 0.55]
    phi = np.array([[1, 0.3, -0.2], [0.3, 1, 0.45], [-0.2, 0.45, 1]])
    r = lam @ phi @ lam.T
    np.fill_diagonal(r, 1.0)
    f = lode.fit_pattern(corr=r, n_obs=500, pattern=(lam != 0).astype(float))
    assert f.converged
    assert np.max(np.abs(f.loadings - lam)) < 1e-8
    assert np.max(np.abs(f.factor_correlations - phi)) < 1e-8
    s = f.statistics
    assert s["chi_square"] < 1e-10 and s["cfi"] == 1.0 and s["rmsea"] == 0.0 and s["srmr"] < 1e-8


def test_standard_errors_match_a_numerical_second_derivative():
    r = r_dataset("cov2cor(ability.cov$cov)")
    ref = Reference(r, ABILITY_PATTERN)
    f = lode.fit_pattern(corr=r, n_obs=112, pattern=ABILITY_PATTERN)
    theta = lode_theta(f, ref)
    # Central differences of F with step 1e-4: truncation near h^2 |F''''| ~ 1e-8, rounding near
    # 1e-16 / h^2 = 1e-8, against Hessian entries of order 0.1-10: 1e-5 relative on the SEs holds.
    h, q = 1e-4, len(theta)
    hess = np.empty((q, q))
    for i in range(q):
        for j in range(q):
            def at(di, dj):
                t = theta.copy()
                t[i] += di
                t[j] += dj
                return ref.F(t)
            hess[i, j] = (at(h, h) - at(h, -h) - at(-h, h) + at(-h, -h)) / (4 * h * h)
    se = np.sqrt(np.diag(np.linalg.inv(hess)) * 2 / (112 - 1))
    nl = len(ref.free)
    lode_se = np.concatenate([f.standard_errors[ref.free[:, 0], ref.free[:, 1]], [f.factor_correlation_errors[0, 1]],
                              f.uniqueness_errors])
    np.testing.assert_allclose(lode_se, se, rtol=1e-5)
    assert np.isnan(f.standard_errors[ABILITY_PATTERN == 0]).all()
    assert nl == 6


def test_bad_patterns_are_refused_with_the_reason():
    r = r_dataset("cov2cor(ability.cov$cov)")
    names = ["general", "picture", "blocks", "maze", "reading", "vocab"]
    nowhere = ABILITY_PATTERN.copy()
    nowhere[3] = 0
    with pytest.raises(lode.LodeError, match="item 'maze' is on no factor"):
        lode.fit_pattern(corr=r, n_obs=112, pattern=nowhere, item_names=names)
    lonely = np.array([[0, 1], [1, 0], [0, 1], [0, 1], [0, 1], [0, 1]], dtype=float)
    with pytest.raises(lode.LodeError, match="factor 1 has 1 item"):
        lode.fit_pattern(corr=r, n_obs=112, pattern=lonely)
    with pytest.raises(lode.LodeError, match="5 rows but there are 6 items"):
        lode.fit_pattern(corr=r, n_obs=112, pattern=ABILITY_PATTERN[:5])
    with pytest.raises(lode.LodeError, match="n_obs"):
        lode.fit_pattern(corr=r, pattern=ABILITY_PATTERN)
    # 6 respondents for 6 items: a singular sample covariance matrix, refused by the library itself
    with pytest.raises(lode.LodeError, match="needs more than 6 respondents behind the matrix; got 6"):
        lode.fit_pattern(corr=r, n_obs=6, pattern=ABILITY_PATTERN)
    assert lode.fit_pattern(corr=r, n_obs=7, pattern=ABILITY_PATTERN).loadings.shape == (6, 2)
    with pytest.raises(lode.ArgumentError):
        lode.fit_pattern(corr=r, n_obs=112, pattern="F1")


# ---- replication and the hold-out check ------------------------------------------------------------------

def simulate(n, loadings, rho, seed):
    """X = F L' + E diag(sqrt(1 - communality)), F ~ N(0, Phi) with equal correlations rho."""
    rng = np.random.default_rng(seed)
    k = loadings.shape[1]
    phi = np.full((k, k), rho)
    np.fill_diagonal(phi, 1.0)
    f = rng.multivariate_normal(np.zeros(k), phi, size=n)
    psi = 1 - np.diag(loadings @ phi @ loadings.T)
    return f @ loadings.T + rng.standard_normal((n, loadings.shape[0])) * np.sqrt(psi)


def four_factor_loadings():
    lam = np.zeros((20, 4))
    for f in range(4):
        lam[5 * f:5 * f + 5, f] = [0.8, 0.7, 0.65, 0.6, 0.75]
    return lam


def test_a_clean_four_factor_structure_replicates_and_noise_does_not():
    x = simulate(2000, four_factor_loadings(), 0.3, 11)
    calls = []
    rep = lode.replicate(x, factors=4, splits=20, seed=5, progress=lambda d, t: calls.append((d, t)))
    assert rep.splits_used == 20 and calls[-1] == (20, 20)
    assert np.all(rep.congruence_median > 0.95) and np.all(rep.congruence_p5 > 0.9)
    assert np.all(rep.share_fair == 1.0)
    assert np.all(rep.item_stability > 0.95)
    assert rep.suggested_full == 4 and rep.share_same_count > 0.9
    # the summaries are those of the per-split congruences (numpy's median and type 7 percentile)
    np.testing.assert_allclose(rep.congruence_median, np.median(rep.congruence, axis=0), rtol=0, atol=1e-15)
    np.testing.assert_allclose(rep.congruence_p5, np.percentile(rep.congruence, 5, axis=0), rtol=0, atol=1e-15)
    again = lode.replicate(x, factors=4, splits=20, seed=5, threads=1)
    assert np.array_equal(again.congruence, rep.congruence)

    noise = np.random.default_rng(3).standard_normal((400, 20))
    nrep = lode.replicate(noise, factors=2, splits=20, seed=5)
    assert np.all(nrep.congruence_median < 0.85)


def test_holdout_check_fits_the_simple_structure_to_new_respondents():
    lam = np.vstack([four_factor_loadings(), np.zeros((1, 4))])  # the last item measures nothing
    x = simulate(1200, lam, 0.3, 21)
    h = lode.holdout_check(x, factors=4, seed=2)
    assert h.n_holdout == 600 and h.n_explore == 600 and len(h.holdout_rows) == 600
    assert list(h.items_left_out) == [20] and len(h.items_fitted) == 20
    c = h.confirmatory
    assert c.converged and c.statistics["df"] == 210 - (20 + 6 + 20)
    assert c.statistics["cfi"] > 0.97 and c.statistics["rmsea"] < 0.03
    # The confirmatory fit is lode.fit_pattern on the held-out rows with the same pattern.
    rows = np.asarray(h.holdout_rows)
    direct = lode.fit_pattern(x[np.ix_(rows, h.items_fitted)], pattern=h.pattern[h.items_fitted])
    assert direct.statistics["chi_square"] == pytest.approx(c.statistics["chi_square"], rel=1e-9)
    assert "not evidence" in h.caution


def test_replication_and_holdout_refuse_bad_input():
    x = simulate(40, four_factor_loadings(), 0.3, 1)
    with pytest.raises(lode.LodeError, match="at least 42 in all"):
        lode.replicate(x, factors=4, splits=10)
    with pytest.raises(lode.ArgumentError, match="number of factors"):
        lode.replicate(x, splits=10)
    with pytest.raises(lode.ArgumentError, match="raw data"):
        lode.replicate(corr=np.eye(3), factors=1)
    with pytest.raises(lode.LodeError, match="splits must be between 2"):
        lode.replicate(simulate(300, four_factor_loadings(), 0.3, 1), factors=4, splits=1)
    y = simulate(200, four_factor_loadings(), 0.3, 1)
    with pytest.raises(lode.LodeError, match="workable shares run from 0.105 to 0.895"):
        lode.holdout_check(y, factors=4, share=0.05)
    with pytest.raises(lode.LodeError, match="cancelled|cancel"):
        lode.replicate(simulate(300, four_factor_loadings(), 0.3, 1), factors=4, splits=10,
                       progress=lambda d, t: False)
