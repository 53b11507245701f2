"""lode.factorability against formulas computed here with numpy and scipy (Kaiser 1970 KMO, Bartlett
1950 sphericity) on simulated data and R's datasets::Harman74.cor."""

import numpy as np
import pytest
import scipy.stats

import lode
from refs import run_r, survey


def r_dataset(expr):
    return run_r(f"emit('r', {expr})")["r"]


# ---- factorability -----------------------------------------------------------------------------------

def test_factorability_matches_formulas():
    x = survey(300, 8, seed=11)
    f = lode.factorability(x)
    r = np.corrcoef(x, rowvar=False)
    # Kaiser (1970) KMO from the anti-image correlations, computed independently with numpy.
    q = np.linalg.inv(r)
    a = -q / np.sqrt(np.outer(np.diag(q), np.diag(q)))
    off = ~np.eye(8, dtype=bool)
    r2, a2 = np.where(off, r, 0) ** 2, np.where(off, a, 0) ** 2
    assert f.kmo == pytest.approx(r2.sum() / (r2.sum() + a2.sum()), abs=1e-12)
    assert np.max(np.abs(f.msa - r2.sum(0) / (r2.sum(0) + a2.sum(0)))) < 1e-12
    assert f.kmo_label in ("marvelous", "meritorious", "middling", "mediocre", "miserable", "unacceptable")
    # Bartlett (1950): chi2 = -(n - 1 - (2p + 5)/6) ln|R|, df = p(p-1)/2; p-value from scipy.stats.chi2.
    chi = -(300 - 1 - (2 * 8 + 5) / 6) * np.log(np.linalg.det(r))
    assert f.bartlett["chi_square"] == pytest.approx(chi, rel=1e-10)
    assert f.bartlett["df"] == 28
    assert f.bartlett["p_value"] == pytest.approx(scipy.stats.chi2.sf(chi, 28), rel=1e-6, abs=1e-300)
    assert f.determinant == pytest.approx(np.linalg.det(r), rel=1e-10)
    assert np.max(np.abs(f.smc - (1 - 1 / np.diag(q)))) < 1e-12


def test_factorability_without_n_obs_or_positive_definiteness():
    r = r_dataset("Harman74.cor$cov")
    f = lode.factorability(corr=r)
    assert f.bartlett is None and f.kmo is not None
    singular = np.array([[1.0, 1, 0], [1, 1, 0], [0, 0, 1]])
    g = lode.factorability(corr=singular, n_obs=50)
    assert g.kmo is None and g.msa is None and g.notes


