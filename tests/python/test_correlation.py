"""lode.correlation against numpy, scipy and R's base stats::cor."""

import numpy as np
import pytest
import scipy.stats

import lode
from bounds import correlation_gap_bound, eigenvalue_gap_bound
from refs import run_r, survey


def test_version():
    v = lode.version()
    assert v["abi"][0] == 2
    assert v["version"].count(".") == 2


def test_complete_data_matches_numpy_corrcoef():
    x = survey(400, 8, seed=3)
    r = lode.correlation(x)
    # Reference: numpy.corrcoef with columns as variables.
    # Tolerances from rounding-error bounds of both sides (tests/support/bounds.py), whatever the BLAS.
    assert np.max(np.abs(r.matrix - np.corrcoef(x, rowvar=False))) < correlation_gap_bound(400)
    assert r.n_obs == 400 and r.rows_total == 400 and r.positive_definite
    assert np.allclose(np.asarray(r), r.matrix)
    # Eigenvalues against numpy.linalg.eigvalsh; SMCs against 1 - 1/diag(R^-1) computed with numpy.
    assert np.max(np.abs(r.eigenvalues - np.sort(np.linalg.eigvalsh(r.matrix))[::-1])) < eigenvalue_gap_bound(8, 8)
    smc = 1 - 1 / np.diag(np.linalg.inv(r.matrix))
    assert np.max(np.abs(r.smc - smc)) < 1e-12
    reduced = r.matrix.copy()
    np.fill_diagonal(reduced, smc)
    assert np.max(np.abs(r.reduced_eigenvalues - np.sort(np.linalg.eigvalsh(reduced))[::-1])) < eigenvalue_gap_bound(8, 8)


def test_spearman_matches_scipy():
    x = survey(300, 6, seed=4)
    # Reference: scipy.stats.spearmanr (average ranks for ties).
    assert np.max(np.abs(lode.correlation(x, method="spearman").matrix - scipy.stats.spearmanr(x).correlation)) < correlation_gap_bound(300)


def test_missing_values_match_r_cor():
    x = survey(250, 6, seed=5, missing=0.1)
    # Reference: R's base stats::cor with pairwise and complete-case deletion.
    ref = run_r("""
        emit("pp", cor(X, use = "pairwise.complete.obs"))
        emit("pl", cor(X, use = "complete.obs"))
        emit("sp", cor(X, use = "pairwise.complete.obs", method = "spearman"))
        emit("nc", sum(complete.cases(X)))
        emit("counts", crossprod(!is.na(X)))
    """, X=x)
    pp = lode.correlation(x)
    assert np.max(np.abs(pp.matrix - ref["pp"])) < correlation_gap_bound(250)
    assert np.array_equal(pp.pair_counts, ref["counts"].astype(np.int64))
    assert pp.n_obs == int(ref["counts"].min())
    pl = lode.correlation(x, missing="listwise")
    assert np.max(np.abs(pl.matrix - ref["pl"])) < correlation_gap_bound(250)
    assert pl.n_obs == int(ref["nc"][0, 0]) == pl.rows_complete
    sp = lode.correlation(x, method="spearman")
    assert np.max(np.abs(sp.matrix - ref["sp"])) < correlation_gap_bound(250)
    assert pp.missing_fraction == pytest.approx(np.isnan(x).mean(), abs=1e-15)


def test_strided_input_is_read_in_place():
    x = survey(200, 7, seed=6, missing=0.05)
    expected = lode.correlation(x).matrix
    # Fortran order, a column slice and a row slice: the same numbers, whatever the layout.
    assert np.array_equal(lode.correlation(np.asfortranarray(x)).matrix, expected)
    wide = np.full((200, 14), 7.0)
    wide[:, ::2] = x
    assert np.array_equal(lode.correlation(wide[:, ::2]).matrix, expected)
    assert np.array_equal(lode.correlation(x[::-1]).matrix, lode.correlation(x[::-1].copy()).matrix)
    assert np.array_equal(lode.correlation(x.tolist()).matrix, expected)


def test_matrix_input_and_smoothing():
    # Higham (2002), section 4: nearest correlation matrix of [[1,1,0],[1,1,1],[0,1,1]].
    a = np.array([[1.0, 1, 0], [1, 1, 1], [0, 1, 1]])
    flagged = lode.correlation(corr=a, n_obs=30)
    assert not flagged.positive_definite and flagged.smc is None
    assert "not positive definite" in flagged.notes[0]
    s = lode.correlation(corr=a, n_obs=30, smooth=True, min_eigenvalue=0.0)
    assert s.smoothed and s.n_obs == 30
    assert s.matrix[0, 1] == pytest.approx(0.7607, abs=5e-5)
    assert s.matrix[0, 2] == pytest.approx(0.1573, abs=5e-5)
    assert s.smoothing["smallest_eigenvalue_before"] == pytest.approx(1 - np.sqrt(2), abs=1e-12)
    cov = np.array([[4.0, 1, 0.6], [1, 1, 0.45], [0.6, 0.45, 9]])
    d = np.sqrt(np.diag(cov))
    assert np.max(np.abs(lode.correlation(cov=cov, n_obs=50).matrix - cov / np.outer(d, d))) < 1e-15


def test_errors_carry_the_library_message():
    x = survey(100, 5, seed=7)
    x[:, 2] = 4.0
    with pytest.raises(lode.LodeError, match="column 3 is constant") as e:
        lode.correlation(x)
    assert e.value.status == 2 and e.value.status_name == "insufficient data"
    with pytest.raises(lode.LodeError, match="item 'clarity' is constant"):
        lode.correlation(x, item_names=["pace", "load", "clarity", "fairness", "support"])
    x[5, 1] = np.inf
    with pytest.raises(lode.LodeError, match="column 2 holds an infinite value in row 6"):
        lode.correlation(x)
    with pytest.raises(lode.LodeError, match="not symmetric"):
        lode.correlation(corr=[[1, 0.2, 0.1], [0.3, 1, 0.1], [0.1, 0.1, 1]], n_obs=10)
    with pytest.raises(ValueError, match="unknown correlation method"):
        lode.correlation(survey(50, 4, seed=1), method="kendall")
    with pytest.raises(ValueError, match="exactly one"):
        lode.correlation()
    with pytest.raises(ValueError, match="2-D"):
        lode.correlation(np.ones(5))
    with pytest.raises(lode.LodeError, match="empty"):
        lode.correlation(np.ones((0, 4)))


def test_polychoric_matches_polycor():
    rng = np.random.default_rng(21)
    z = rng.multivariate_normal(np.zeros(3), [[1, 0.5, 0.3], [0.5, 1, 0.4], [0.3, 0.4, 1]], size=800)
    cuts = [-1.0, -0.2, 0.5, 1.3]
    x = np.digitize(z, cuts).astype(float) + 1  # five categories
    r = lode.correlation(x, method="polychoric", threads=1)
    # Reference: r-cran-polycor's polychor (two-step estimate, ML = FALSE, with its standard error).
    ref = run_r("""
        library(polycor)
        e <- matrix(0, 3, 3); s <- matrix(0, 3, 3)
        for (i in 1:3) for (j in 1:3) if (i != j) {
          p <- polychor(X[, i], X[, j], ML = FALSE, std.err = TRUE)
          e[i, j] <- p$rho; s[i, j] <- sqrt(p$var[1, 1])
        }
        emit("rho", e); emit("se", s)
    """, X=x)
    off = ~np.eye(3, dtype=bool)
    assert np.max(np.abs(r.matrix[off] - ref["rho"][off])) < 1e-4
    assert np.max(np.abs(r.standard_errors[off] - ref["se"][off])) < 1e-3
    # Thresholds are the normal quantiles of the cumulative margins (scipy.stats.norm.ppf).
    for j in range(3):
        cum = np.cumsum(np.bincount(x[:, j].astype(int))[1:])[:-1] / len(x)
        assert np.max(np.abs(r.thresholds[j] - scipy.stats.norm.ppf(cum))) < 1e-10
    assert r.polychoric["not_converged"] == 0
    with pytest.raises(lode.LodeError, match="column 2"):
        y = x.copy()
        y[0, 1] = 2.5
        lode.correlation(y, method="polychoric")
