"""lode.fit and lode.rotate against R's base stats (factanal, varimax, promax), statsmodels'
factor_rotation and identities checked here with numpy."""

import numpy as np
import pytest

import lode
from refs import run_r, survey


def r_dataset(expr):
    return run_r(f"emit('r', {expr})")["r"]


def align(actual, expected):
    """Flips the sign of each column of `actual` to match `expected` (solutions are unique up to sign)."""
    signs = np.sign(np.sum(actual * expected, axis=0))
    signs[signs == 0] = 1
    return actual * signs


# ---- fit ---------------------------------------------------------------------------------------------

FACTANAL = """
f <- factanal(covmat = R, factors = k[1, 1], n.obs = n[1, 1], rotation = "none",
              control = list(nstart = 1, lower = 0.005, opt = list(factr = 1, pgtol = 0, maxit = 10000)))
emit("u", f$uniquenesses)
emit("l", unclass(f$loadings))
emit("stat", f$STATISTIC)
emit("dof", f$dof)
emit("pval", f$PVAL)
"""


@pytest.mark.parametrize("dataset,n,k", [("Harman74.cor$cov", 145, 4), ("cov2cor(ability.cov$cov)", 112, 2)])
def test_ml_fit_matches_factanal(dataset, n, k):
    r = r_dataset(dataset)
    # Reference: R's stats::factanal with tight optimiser controls (datasets::Harman74.cor, ability.cov).
    ref = run_r(FACTANAL, R=r, k=k, n=n)
    m = lode.fit(corr=r, n_obs=n, factors=k, method="ml", rotation="none")
    assert m.converged and m.factors == k and m.method == "ml" and m.rotation == "none"
    assert np.max(np.abs(m.uniquenesses - ref["u"][:, 0])) < 1e-4
    assert np.max(np.abs(align(m.loadings, ref["l"]) - ref["l"])) < 1e-4
    s = m.statistics
    assert s["chi_square"] == pytest.approx(ref["stat"][0, 0], rel=1e-4)
    assert s["df"] == ref["dof"][0, 0]
    assert s["p_value"] == pytest.approx(ref["pval"][0, 0], abs=1e-5)
    for key in ("rmsea", "tli", "bic", "rmsr"):
        assert np.isfinite(s[key])
    lo, hi = s["rmsea_ci"]
    assert lo <= s["rmsea"] <= hi
    # Residuals: observed minus implied, computed here.
    implied = m.unrotated_loadings @ m.unrotated_loadings.T + np.diag(m.uniquenesses)
    assert np.max(np.abs(m.residuals - (r - implied))) < 1e-10
    assert np.allclose(m.communalities, 1 - m.uniquenesses, atol=1e-10)


def test_varimax_and_promax_fit_match_r():
    r = r_dataset("Harman74.cor$cov")
    m = lode.fit(corr=r, n_obs=145, factors=4, method="ml", rotation="varimax")
    # Reference: R's stats::varimax (Kaiser normalisation, tight eps) of the same unrotated loadings.
    ref = run_r("emit('v', unclass(varimax(L, normalize = TRUE, eps = 1e-14)$loadings))", L=m.unrotated_loadings)
    v = ref["v"]
    # Match columns (order may differ) by congruence, then signs.
    order = [int(np.argmax(np.abs(m.loadings.T @ v[:, j]))) for j in range(4)]
    assert sorted(order) == [0, 1, 2, 3]
    assert np.max(np.abs(align(m.loadings[:, order], v) - v)) < 1e-4
    assert np.allclose(m.factor_correlations, np.eye(4), atol=1e-12)
    # Rotation keeps the common part: Lambda Phi Lambda' equals A A'.
    p = lode.fit(corr=r, n_obs=145, factors=4, method="ml", rotation="promax")
    assert p.oblique
    common = p.loadings @ p.factor_correlations @ p.loadings.T
    assert np.max(np.abs(common - p.unrotated_loadings @ p.unrotated_loadings.T)) < 1e-8
    assert np.max(np.abs(p.structure - p.loadings @ p.factor_correlations)) < 1e-12


def test_fit_from_raw_data_and_suggested_count():
    x = survey(500, 9, seed=12, factors=3, loading=0.75)
    m = lode.fit(x, factors=0, method="paf", rotation="oblimin", seed=5, replicates=200)
    assert m.factors == 3 and m.suggested_factors == 3
    assert m.loadings.shape == (9, 3) and m.n_obs == 500
    # Each construct's three items load on one factor (common practice: a clean simple structure).
    assignment = np.argmax(np.abs(m.loadings), axis=1)
    assert all(len(set(assignment[j::3])) == 1 for j in range(3))
    assert len(set(assignment)) == 3


def test_fit_reports_heywood_and_missing_statistics():
    r = r_dataset("Harman74.cor$cov")
    m = lode.fit(corr=r, factors=2, method="minres")
    assert m.statistics["chi_square"] is None and "n_obs" in m.statistics_unavailable
    assert np.isfinite(m.statistics["rmsr"])
    with pytest.raises(lode.LodeError, match="factor"):
        lode.fit(corr=r, n_obs=145, factors=30)
    with pytest.raises(ValueError, match="unknown extraction method"):
        lode.fit(corr=r, n_obs=145, factors=2, method="alpha")
    with pytest.raises(lode.LodeError, match="varimax"):
        lode.fit(corr=r, n_obs=145, factors=2, rotation="spin")


# ---- rotate -------------------------------------------------------------------------------------------

def unrotated(k=3):
    r = r_dataset("Harman74.cor$cov")
    return lode.fit(corr=r, n_obs=145, factors=k, method="ml").unrotated_loadings


def match_columns(actual, expected):
    order = [int(np.argmax(np.abs(actual.T @ expected[:, j]))) for j in range(expected.shape[1])]
    assert sorted(order) == list(range(expected.shape[1]))
    return align(actual[:, order], expected)


@pytest.mark.parametrize("method", ["oblimin", "quartimin", "quartimax"])
def test_rotate_matches_statsmodels(method):
    a = unrotated()
    # Reference: statsmodels' factor_rotation.rotate_factors (gradient projection; no row normalisation).
    from statsmodels.multivariate.factor_rotation import rotate_factors
    if method == "quartimax":
        ref, _ = rotate_factors(a, "quartimax")
    else:
        ref, _ = rotate_factors(a, "oblimin", 0.0, "oblique")
    got = lode.rotate(a, method, normalize=False, random_starts=0 if method == "quartimax" else 20, seed=3)
    assert np.max(np.abs(match_columns(got.loadings, ref) - ref)) < 1e-4
    assert got.oblique == (method != "quartimax")


def test_rotate_target_and_promax_match_references():
    a = unrotated()
    # Reference: statsmodels' rotate_factors(A, 'target', H) (orthogonal Procrustes toward a full target).
    from statsmodels.multivariate.factor_rotation import rotate_factors
    h = np.where(np.abs(lode.rotate(a, "varimax").loadings) > 0.4, 1.0, 0.0)
    ref, _ = rotate_factors(a, "target", h, "orthogonal")
    got = lode.rotate(a, "target", target=h, normalize=False)
    assert np.max(np.abs(got.loadings - ref)) < 1e-4
    # Reference: R's stats::promax (m = 4; R normalises rows in its varimax step).
    pref = run_r("emit('p', unclass(promax(A, m = 4)$loadings))", A=a)["p"]
    p = lode.rotate(a, "promax", kappa=4)
    assert np.max(np.abs(match_columns(p.loadings, pref) - pref)) < 1e-4


def test_rotate_errors():
    a = unrotated()
    with pytest.raises(lode.LodeError, match="infinite|finite"):
        b = a.copy()
        b[0, 0] = np.inf
        lode.rotate(b, "varimax")
    with pytest.raises(lode.LodeError):
        lode.rotate(a[:, :1], "varimax")
    with pytest.raises(lode.LodeError, match="target"):
        lode.rotate(a, "target", target=np.ones((2, 2)))


