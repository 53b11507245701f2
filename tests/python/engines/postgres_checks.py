"""lode.summary_from_sql against a real PostgreSQL server started here (unix socket in a private
folder, no TCP): 1,000,000 rows x 30 items with missing answers loaded with COPY; the summary the
database computes gives the same counts, tables, Pearson and polychoric correlations as the rows in
memory. Also the parameterised filter, hostile table and column names, the read-only transaction
and a role that may only read the table."""

import os
import sys
import time

import numpy as np
import pytest
from psycopg2 import sql

sys.path.insert(0, os.path.dirname(__file__))
import lode  # noqa: E402
from pg_server import Server, copy_rows  # noqa: E402

N_ROWS, N_ITEMS = 1_000_000, 30
ITEMS = [f"q{j + 1}" for j in range(N_ITEMS)]


def ordinal(n, p, seed, missing=0.08, categories=5):
    """Invented engagement-survey answers: two latent factors cut into codes 1..categories, a share
    of answers skipped at random."""
    rng = np.random.default_rng(seed)
    f = rng.standard_normal((n, 2))
    load = np.zeros((2, p))
    load[0, : p // 2] = np.linspace(0.5, 0.8, p // 2)
    load[1, p // 2:] = np.linspace(0.5, 0.8, p - p // 2)
    latent = f @ load + 0.6 * rng.standard_normal((n, p))
    x = np.clip(np.floor(latent * 1.3 + categories / 2), 0, categories - 1) + 1
    x[rng.random((n, p)) < missing] = np.nan
    return x


@pytest.fixture(scope="module")
def db():
    server = Server()
    try:
        conn = server.connect()
        x = ordinal(N_ROWS, N_ITEMS, 2026)
        wave = (np.arange(N_ROWS) % 3).astype(float)[:, None]
        with conn.cursor() as cur:
            cur.execute(sql.SQL("CREATE TABLE answers ({}, wave smallint)").format(
                sql.SQL(", ").join(sql.SQL("{} smallint").format(sql.Identifier(c)) for c in ITEMS)))
        conn.commit()
        start = time.perf_counter()
        copy_rows(conn, "answers", ITEMS + ["wave"], np.hstack([x, wave]), ident=sql)
        print(f"\nCOPY of {N_ROWS} rows x {N_ITEMS} items: {time.perf_counter() - start:.1f} s")
        yield server, conn, x, wave[:, 0]
        conn.close()
    finally:
        server.stop()


def test_summary_from_sql_equals_the_rows_in_memory(db):
    _, conn, x, _ = db
    start = time.perf_counter()
    s = lode.summary_from_sql(conn, "answers", ITEMS)
    print(f"\nsummary in PostgreSQL: {time.perf_counter() - start:.1f} s, {len(s.to_bytes())} bytes")
    start = time.perf_counter()
    m = lode.Summary(items=ITEMS)
    for block in np.array_split(x, 10):
        m.add(block)
    print(f"summary in memory: {time.perf_counter() - start:.1f} s")
    assert s.n_rows == N_ROWS == m.n_rows
    assert np.array_equal(s.pair_counts, m.pair_counts)
    assert np.array_equal(s.matrix("category_counts"), m.matrix("category_counts"), equal_nan=True)
    for a in range(0, N_ITEMS, 7):
        for b in range(a + 1, N_ITEMS, 5):
            assert np.array_equal(s.table(a, b), m.table(a, b))
    raw = lode.correlation(x)
    r = lode.correlation(summary=s)
    # Correlations of 10^6 products: each side is good to ~1e-16 * 10^6 relative; 1e-10 as asked.
    assert np.max(np.abs(r.matrix - raw.matrix)) < 1e-10
    assert np.array_equal(r.pair_counts, raw.pair_counts) and r.n_obs == raw.n_obs
    assert r.rows_used == raw.rows_used and r.rows_complete == raw.rows_complete
    start = time.perf_counter()
    poly_raw = lode.correlation(x, method="polychoric")
    print(f"polychoric from the rows: {time.perf_counter() - start:.1f} s")
    start = time.perf_counter()
    poly = lode.correlation(summary=s, method="polychoric")
    print(f"polychoric from the summary: {time.perf_counter() - start:.1f} s")
    assert np.max(np.abs(poly.matrix - poly_raw.matrix)) < 1e-10
    spearman = lode.correlation(summary=s, method="spearman")
    assert np.max(np.abs(spearman.matrix - lode.correlation(summary=m, method="spearman").matrix)) < 1e-12
    model = lode.fit(summary=s, factors=2, rotation="oblimin")
    assert model.n_obs == raw.n_obs


def test_filter_values_are_parameters(db):
    _, conn, x, wave = db
    s = lode.summary_from_sql(conn, "answers", ITEMS[:6], where="wave = %s", params=[1])
    m = lode.Summary(items=ITEMS[:6]).add(x[wave == 1, :6])
    assert s.n_rows == m.n_rows == int(np.sum(wave == 1))
    assert np.array_equal(s.pair_counts, m.pair_counts)
    assert np.max(np.abs(lode.correlation(summary=s).matrix - lode.correlation(summary=m).matrix)) < 1e-12
    # A hostile value stays a value: it matches no row and runs nothing.
    hostile = "1; DROP TABLE answers; --"
    s = lode.summary_from_sql(conn, "answers", ITEMS[:3], where="wave::text = %s", params=[hostile])
    assert s.n_rows == 0
    with conn.cursor() as cur:
        cur.execute("SELECT count(*) FROM answers")
        assert cur.fetchone()[0] == N_ROWS
    conn.rollback()


def test_hostile_names_are_quoted_identifiers(db):
    _, conn, _, _ = db
    table = 'survey "answers"; DROP TABLE answers; --'
    cols = ['q1"; DROP TABLE answers; --', "q2", "Q2"]
    x = ordinal(500, 3, 7)
    with conn.cursor() as cur:
        cur.execute(sql.SQL("CREATE TABLE {} ({})").format(
            sql.Identifier(table), sql.SQL(", ").join(sql.SQL("{} smallint").format(sql.Identifier(c)) for c in cols)))
    conn.commit()
    copy_rows(conn, table, cols, x, ident=sql)
    s = lode.summary_from_sql(conn, table, cols)
    m = lode.Summary(items=cols).add(x)
    assert s.items == cols
    assert np.array_equal(s.pair_counts, m.pair_counts)
    assert np.max(np.abs(lode.correlation(summary=s).matrix - lode.correlation(summary=m).matrix)) < 1e-12
    with conn.cursor() as cur:
        cur.execute("SELECT count(*) FROM answers")
        assert cur.fetchone()[0] == N_ROWS
        cur.execute(sql.SQL("SELECT count(*) FROM {}").format(sql.Identifier(table)))
        assert cur.fetchone()[0] == 500
    conn.rollback()


def test_queries_run_read_only_and_under_a_reading_role(db):
    server, conn, x, _ = db
    with conn.cursor() as cur:
        cur.execute("CREATE SEQUENCE probe")
    conn.commit()
    # A filter that would write (advance a sequence) fails: the transaction is read-only.
    with pytest.raises(Exception, match="read-only transaction"):
        lode.summary_from_sql(conn, "answers", ITEMS[:3], where="nextval('probe') > 0")
    # The role of README's example: may connect and read the survey table, nothing else.
    with conn.cursor() as cur:
        cur.execute("CREATE ROLE survey_reader LOGIN")
        cur.execute("GRANT SELECT ON answers TO survey_reader")
    conn.commit()
    reader = server.connect(user="survey_reader")
    try:
        s = lode.summary_from_sql(reader, "answers", ITEMS[:4], listwise=True)
        c = x[:, :4][~np.isnan(x[:, :4]).any(axis=1)]
        assert s.n_rows == N_ROWS and s.rows_complete == c.shape[0]
        r = lode.correlation(summary=s, missing="listwise")
        # Reference: numpy.corrcoef of the complete rows.
        assert np.max(np.abs(r.matrix - np.corrcoef(c, rowvar=False))) < 1e-10
        with reader.cursor() as cur, pytest.raises(Exception, match="permission denied"):
            cur.execute("DELETE FROM answers")
        reader.rollback()
    finally:
        reader.close()
