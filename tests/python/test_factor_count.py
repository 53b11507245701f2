"""lode.count_factors, lode.parallel_analysis and lode.map_test: known structure in simulated data, and the MAP
statistic against an independent numpy implementation (Velicer 1976; Velicer, Eaton & Fava 2000)."""

import numpy as np
import pytest

import lode
from refs import survey


# ---- factor count --------------------------------------------------------------------------------------

def map_reference(r):
    """Velicer's (1976) MAP, squared and fourth power, computed independently with numpy."""
    p = r.shape[0]
    w, v = np.linalg.eigh(r)
    idx = np.argsort(w)[::-1]
    w, v = w[idx], v[:, idx]
    loadings = v * np.sqrt(np.maximum(w, 0))
    off = ~np.eye(p, dtype=bool)
    sq, fo = [np.mean(r[off] ** 2)], [np.mean(r[off] ** 4)]
    for m in range(1, p - 1):
        c = r - loadings[:, :m] @ loadings[:, :m].T
        d = np.sqrt(np.diag(c))
        pc = c / np.outer(d, d)
        sq.append(np.mean(pc[off] ** 2))
        fo.append(np.mean(pc[off] ** 4))
    return np.array(sq), np.array(fo)


def test_count_factors_known_structure_and_map():
    x = survey(500, 12, seed=13, factors=3, loading=0.7)
    c = lode.count_factors(x, replicates=300, seed=9)
    assert c.suggested == 3
    assert c.parallel["suggested_factor"] == 3 and c.map["suggested_squared"] == 3
    assert isinstance(c.counts, dict) and len(c.counts) >= 4 and all(isinstance(v, int) for v in c.counts.values())
    sq, fo = map_reference(np.corrcoef(x, rowvar=False))
    n = len(sq)
    assert np.max(np.abs(c.map["average_squared"][:n] - sq)) < 1e-10
    assert np.max(np.abs(c.map["average_fourth"][:n] - fo)) < 1e-10
    pa = lode.parallel_analysis(x, replicates=300, seed=9)
    assert np.array_equal(pa["random_pc_mean"], c.parallel["random_pc_mean"])
    assert lode.map_test(x)["suggested_squared"] == 3


def test_former_names_still_work_and_say_so():
    # n_factors and by_rule were renamed (count_factors, counts); scripts using them still run
    x = survey(300, 10, seed=15, factors=2, loading=0.7)
    with pytest.warns(DeprecationWarning, match="count_factors"):
        old = lode.n_factors(x, replicates=50, seed=3)
    new = lode.count_factors(x, replicates=50, seed=3)
    with pytest.warns(DeprecationWarning, match="counts"):
        assert old.by_rule == new.counts
    assert old.suggested == new.suggested


def test_count_factors_progress_and_cancel():
    x = survey(300, 10, seed=14)
    seen = []
    lode.count_factors(x, replicates=2000, seed=1, progress=lambda d, t: seen.append((d, t)) or True)
    assert seen and seen[-1][0] == seen[-1][1] == 2000
    with pytest.raises(lode.LodeError, match="cancel") as e:
        lode.count_factors(x, replicates=200000, seed=1, progress=lambda d, t: False)
    assert e.value.status_name == "cancelled"
