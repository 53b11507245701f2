"""lode.compare_groups: each group's solution turned towards the pooled one, against scipy's
orthogonal Procrustes (scipy.linalg.orthogonal_procrustes) and a least-squares oblique Procrustes
written here (Hurley & Cattell 1962); congruence of groups drawn from one model; a moved item flagged."""

import numpy as np
import pytest
import scipy.linalg

import lode


def _loadings(moved=False):
    L = np.zeros((12, 3))
    for f in range(3):
        L[4 * f:4 * f + 4, f] = [0.75, 0.7, 0.65, 0.6]
    if moved:
        L[1] = [0.0, 0.7, 0.0]  # item 2 moves from factor 1 to factor 2
    return L


def _sample(L, n, rng):
    phi = np.array([[1, 0.3, 0.2], [0.3, 1, 0.25], [0.2, 0.25, 1]])
    f = rng.multivariate_normal(np.zeros(3), phi, size=n)
    u = np.sqrt(1 - np.diag(L @ phi @ L.T))
    return f @ L.T + rng.standard_normal((n, L.shape[0])) * u


def _groups(models, labels, n, seed):
    rng = np.random.default_rng(seed)
    X = np.vstack([_sample(L, n, rng) for L in models])
    g = np.repeat(labels, n)
    return X, g


@pytest.mark.parametrize("rotation", ["varimax", "oblimin"])
def test_procrustes_against_scipy_and_least_squares(rotation):
    X, g = _groups([_loadings(), _loadings()], ["north", "south"], 1000, seed=5)
    c = lode.compare_groups(X, g, factors=3, rotation=rotation)
    assert c.groups == ["north", "south"] and list(c.rows) == [1000, 1000]
    assert c.oblique == (rotation == "oblimin")
    for k, label in enumerate(c.groups):
        A = lode.fit(X[g == label], factors=3, rotation="none").loadings  # the group's unrotated loadings
        B = c.pooled_pattern
        if rotation == "varimax":
            R, _ = scipy.linalg.orthogonal_procrustes(A, B)
            expected = A @ R
        else:
            U = np.linalg.lstsq(A, B, rcond=None)[0]
            U = U * np.sqrt(np.diag(np.linalg.inv(U.T @ U)))
            expected = A @ U
        # Same unrotated loadings on both sides; the 3 x 3 decompositions agree to ~1e-14.
        assert np.max(np.abs(c.patterns[k] - expected)) < 1e-10
        # Groups drawn from one model at n = 1,000: the same factors.
        assert np.all(c.congruence[k] > 0.95)
    assert c.item_differences == [] and c.skipped == []
    assert any("not a formal test of measurement invariance" in n for n in c.notes)


def test_moved_item_flagged_and_small_group_skipped():
    # Seven groups of one model, one with item 2 moved (the pooled loading stays near the common model).
    models = [_loadings()] * 7 + [_loadings(moved=True)]
    X, g = _groups(models, list(range(1, 9)), 1000, seed=9)
    rng = np.random.default_rng(10)
    X = np.vstack([X, _sample(_loadings(), 40, rng)])
    g = np.concatenate([g, np.full(40, 9)])
    c = lode.compare_groups(X, g, factors=3, rotation="oblimin")
    assert c.groups == list(range(1, 9))
    assert c.skipped == [(9, 40, "group 9 has 40 respondents; at least 100 are needed")]
    flagged = {(d["group"], d["item"]) for d in c.item_differences}
    assert (8, 1) in flagged
    assert all(d["group"] == 8 for d in c.item_differences), c.item_differences
    assert c.alpha.shape == (8, 3) and c.omega.shape == (8, 3)


def test_errors():
    X, g = _groups([_loadings()], ["a"], 300, seed=1)
    with pytest.raises(lode.LodeError, match="only 1 of 1 groups have at least 100 respondents"):
        lode.compare_groups(X, g, factors=3)
    with pytest.raises(lode.ArgumentError, match="10 group labels were given for 300 rows"):
        lode.compare_groups(X, g[:10], factors=3)
