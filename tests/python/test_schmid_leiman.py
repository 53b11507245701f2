"""lode.schmid_leiman (Schmid & Leiman 1957; omegas of McDonald 1999 and Zinbarg et al. 2005) against
numpy: a bifactor population built here, the identity g g' + B B' = L Phi L' with three factors, and
the published omega formulas with Spearman's triad for the second-order loadings."""

import numpy as np
import pytest

import lode


def _population():
    L = np.zeros((12, 3))
    for f in range(3):
        L[4 * f:4 * f + 4, f] = [0.7, 0.6, 0.65, 0.55]
    gamma = np.array([0.8, 0.7, 0.6])
    phi = np.outer(gamma, gamma)
    np.fill_diagonal(phi, 1.0)
    R = L @ phi @ L.T
    np.fill_diagonal(R, 1.0)
    return L, gamma, R


def _omegas(P, phi):
    """Published formulas in numpy: gamma from Spearman's triad, g = P gamma, B = P sqrt(1 - gamma^2)."""
    gam = np.sqrt([phi[0, 1] * phi[0, 2] / phi[1, 2], phi[0, 1] * phi[1, 2] / phi[0, 2], phi[0, 2] * phi[1, 2] / phi[0, 1]])
    g = P @ gam
    B = P * np.sqrt(1 - gam ** 2)
    u = 1 - g ** 2 - (B ** 2).sum(axis=1)
    V = g.sum() ** 2 + (B.sum(axis=0) ** 2).sum() + u.sum()
    a = np.abs(P).argmax(axis=1)
    sub = []
    for f in range(3):
        S = a == f
        sub.append(B[S, f].sum() ** 2 / (g[S].sum() ** 2 + (B[S].sum(axis=0) ** 2).sum() + u[S].sum()))
    return dict(omega_total=(g.sum() ** 2 + (B.sum(axis=0) ** 2).sum()) / V, omega_hierarchical=g.sum() ** 2 / V,
                ecv=(g ** 2).sum() / ((g ** 2).sum() + (B ** 2).sum()), omega_subscales=np.array(sub), g=g, B=B)


def test_bifactor_population_recovered_and_omegas_match_numpy():
    L, gamma, R = _population()
    m = lode.fit(corr=R, n_obs=1000, factors=3, rotation="quartimin")
    s = lode.schmid_leiman(m)
    # Recovered up to the fits' convergence criteria (extraction 1e-9 on the gradient, rotation 1e-6).
    assert np.max(np.abs(np.abs(s.general) - L @ gamma)) < 1e-4
    ref = _omegas(m.loadings, m.factor_correlations)
    for key in ("omega_total", "omega_hierarchical", "ecv"):
        assert abs(getattr(s, key) - ref[key]) < 1e-8, key
    assert np.max(np.abs(s.omega_subscales - ref["omega_subscales"])) < 1e-8
    # The common part of the oblique solution, L Phi L', reproduced (second-order fit to 1e-10).
    common = m.loadings @ m.factor_correlations @ m.loadings.T
    assert np.max(np.abs(np.outer(s.general, s.general) + s.group @ s.group.T - common)) < 1e-8
    assert s.second_order_converged and s.second_order_max_residual < 1e-8
    assert 0 < s.omega_hierarchical < s.omega_total < 1 and 0 < s.ecv < 1
    assert list(s.assignment) == [int(np.argmax(np.abs(r))) for r in m.loadings]


def test_refusals_name_the_problem():
    L, gamma, R = _population()
    with pytest.raises(lode.LodeError, match="the factors are uncorrelated"):
        lode.schmid_leiman(lode.fit(corr=R, n_obs=1000, factors=3, rotation="varimax"))
    with pytest.raises(lode.LodeError, match="at least 3 factors; this one has 2"):
        lode.schmid_leiman(lode.fit(corr=R, n_obs=1000, factors=2, rotation="quartimin"))
    with pytest.raises(lode.LodeError, match="must be a factor analysis"):
        lode.schmid_leiman(lode.fit(corr=R, n_obs=1000, factors=3, rotation="quartimin"), second_order="pca")
