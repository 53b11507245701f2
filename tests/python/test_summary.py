"""lode.Summary: correlations and fits from a summary against pandas/scipy and the raw rows, merging,
the byte form (written by the library and by the Python encoder of summary_sql), and refusals."""

import pickle

import numpy as np
import pandas as pd
import pytest
import scipy.stats

import lode
from lode import summary_sql


def ordinal(n, p, seed, missing=0.1, categories=5):
    """Invented ordinal answers: one latent factor cut into ordered codes 1..categories."""
    rng = np.random.default_rng(seed)
    f = rng.standard_normal((n, 1))
    latent = f * np.linspace(0.5, 0.8, p) + 0.7 * rng.standard_normal((n, p))
    x = np.clip(np.floor(latent * 1.2 + categories / 2), 0, categories - 1) + 1
    x[rng.random((n, p)) < missing] = np.nan
    return x


def summary_in_parts(x, parts=4, **kw):
    pieces = [lode.Summary(**kw).add(block) for block in np.array_split(x, parts)]
    total = lode.Summary(**kw)  # empty: takes its items from the first merge
    for s in pieces:
        total.merge(s)
    return total


def test_pearson_and_spearman_from_a_summary_match_pandas():
    x = ordinal(2500, 6, 1)
    s = summary_in_parts(x)
    assert s.n_rows == 2500
    d = pd.DataFrame(x)
    # Reference: pandas DataFrame.corr, pairwise-complete rows (Spearman ranks within each pair's rows).
    r = lode.correlation(summary=s)
    assert np.max(np.abs(r.matrix - d.corr().to_numpy())) < 1e-12
    rs = lode.correlation(summary=s, method="spearman")
    assert np.max(np.abs(rs.matrix - d.corr(method="spearman").to_numpy())) < 1e-12
    mask = (~np.isnan(x)).astype(float)
    assert np.array_equal(r.pair_counts, mask.T @ mask)
    assert r.n_obs == int((mask.T @ mask).min())
    raw = lode.correlation(x)
    assert r.missing_fraction == pytest.approx(raw.missing_fraction, abs=1e-15)
    assert r.rows_used == raw.rows_used


def test_listwise_summary_matches_scipy_on_complete_rows():
    x = ordinal(1500, 5, 2, missing=0.04)
    s = summary_in_parts(x, listwise=True)
    c = x[~np.isnan(x).any(axis=1)]
    r = lode.correlation(summary=s, missing="listwise", method="spearman")
    # Reference: scipy.stats.spearmanr on the complete rows.
    assert np.max(np.abs(r.matrix - scipy.stats.spearmanr(c).correlation)) < 1e-12
    assert r.n_obs == c.shape[0]
    with pytest.raises(lode.LodeError, match="ask for listwise"):
        lode.correlation(summary=s)


def test_polychoric_and_fit_from_a_summary_equal_the_raw_rows():
    x = ordinal(2000, 6, 3)
    s = summary_in_parts(x, parts=3)
    a = lode.correlation(summary=s, method="polychoric")
    b = lode.correlation(x, method="polychoric")
    assert np.max(np.abs(a.matrix - b.matrix)) < 1e-12
    assert np.max(np.abs(np.nan_to_num(a.thresholds) - np.nan_to_num(b.thresholds))) < 1e-14
    m1 = lode.fit(summary=s, factors=1)
    m2 = lode.fit(x, factors=1)
    assert m1.n_obs == m2.n_obs
    assert np.max(np.abs(m1.loadings - m2.loadings)) < 1e-8
    f = lode.factorability(summary=s)
    assert f.kmo == pytest.approx(lode.factorability(x).kmo, abs=1e-12)


def test_byte_form_round_trip_pickle_and_python_encoder():
    x = ordinal(800, 4, 4)
    s = lode.Summary(items=["q1", "q2", "q3", "q4"]).add(x)
    b = s.to_bytes()
    back = lode.Summary.from_bytes(b)
    assert back.items == ["q1", "q2", "q3", "q4"] and back.n_rows == 800
    assert back.to_bytes() == b
    assert pickle.loads(pickle.dumps(s)).to_bytes() == b
    # The Python encoder (what summary_from_sql writes) on the library's own numbers gives its bytes.
    p = 4
    n, mean, m2, co = (s.matrix(k) for k in ("pair_counts", "means", "sums_of_squares", "comoments"))
    moments = {(i, j): [n[i, j], mean[i, j], mean[j, i], m2[i, j], m2[j, i], co[i, j]]
               for i in range(p) for j in range(i, p)}
    cats_m, counts_m = s.matrix("categories"), s.matrix("category_counts")
    cats = [[(v, int(c)) for v, c in zip(cats_m[j], counts_m[j]) if not np.isnan(v)] for j in range(p)]
    tables = {(a, b2): s.table(a, b2).astype(int).tolist() for a in range(p) for b2 in range(a + 1, p)}
    counts = (800, s.rows_complete, int(np.sum(~np.isnan(x).all(axis=1))), int(np.isnan(x).sum()))
    assert summary_sql._encode(s.items, 11, False, counts, moments, cats, tables) == b


def test_damaged_bytes_and_mismatched_merges_are_refused():
    s = lode.Summary(items=["q1", "q2", "q3"]).add(ordinal(100, 3, 5))
    b = s.to_bytes()
    for cut in (0, 7, 40, len(b) // 2, len(b) - 1):
        with pytest.raises(lode.LodeError, match="not a readable Lode summary"):
            lode.Summary.from_bytes(b[:cut])
    damaged = bytearray(b)
    damaged[100] ^= 1
    with pytest.raises(lode.LodeError, match="check sum"):
        lode.Summary.from_bytes(bytes(damaged))
    with pytest.raises(lode.LodeError, match="item 3 is 'q3' in one and 'q9' in the other"):
        s.merge(lode.Summary(items=["q1", "q2", "q9"]).add(ordinal(10, 3, 6)))
    with pytest.raises(lode.LodeError, match="up to 11 values, the other up to 5"):
        s.merge(lode.Summary(items=["q1", "q2", "q3"], max_categories=5))
    assert s.n_rows == 100  # unchanged by the refused merges


def test_what_needs_rows_says_so():
    x = ordinal(300, 4, 7, missing=0.0)
    s = lode.Summary().add(x)
    model = lode.fit(summary=s, factors=1)
    with pytest.raises(ValueError, match="scores need the respondents' rows"):
        lode.scores(s, model)
    with pytest.raises(ValueError, match="bootstrap replicates need the respondents' rows"):
        lode.bootstrap(summary=s, factors=1)
    with pytest.raises(ValueError, match="alpha need the respondents' rows"):
        lode.alpha(summary=s)
    with pytest.raises(ValueError, match="not both"):
        lode.correlation(x, summary=s)
    # Scores of the rows themselves under a model fitted from their summary work.
    assert lode.scores(x, model).values.shape == (300, 1)


def test_item_over_the_limit_keeps_moments_only():
    x = ordinal(500, 4, 8, missing=0.0)
    x[:, 3] = x[:, 0] + np.random.default_rng(8).standard_normal(500)
    s = lode.Summary(items=["a", "b", "c", "hours"]).add(x)
    assert np.max(np.abs(lode.correlation(summary=s).matrix - np.corrcoef(x, rowvar=False))) < 1e-12
    with pytest.raises(lode.LodeError, match="item 'hours' has more than 11 distinct values.*polychoric correlations need"):
        lode.correlation(summary=s, method="polychoric")
