#!/usr/bin/python3
"""Summaries computed where the data live, timed against exporting the rows (issue 23's measurements).

  engines.py OUT.json [--rows N] [--workers 1,2]

The same invented survey answers (30 items, 5 categories, 8% skipped at random; `ordinal` of the
engine tests) go into a private PostgreSQL server (started here: unix socket in a private folder, no
TCP) and into CSV files for a Dask LocalCluster (loopback). Timed, each to a fitted model (two factors,
Lode's defaults otherwise):

- PostgreSQL through the SQL summary: `lode.summary_from_sql`, then `lode.fit(summary=...)`;
- PostgreSQL by exporting the rows (COPY ... TO STDOUT, parsed by pandas) and fitting them in memory,
  what an analyst does without summaries;
- Dask with 1 and 2 worker processes: a summary per partition, a tree reduction with `merge`, then the fit.

Also the sizes: the summary's byte form against the rows as doubles and the table on disk. Each route
runs once (10 million rows take minutes); the loadings of every route are checked equal to the
in-memory fit, so a fast wrong answer cannot pass. Needs LODE_LIBRARY (or an installed liblode) and
Debian's postgresql, python3-psycopg2, python3-distributed, python3-pandas."""
import argparse
import io
import json
import os
import resource
import sys
import tempfile
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
ENGINES = os.path.normpath(os.path.join(HERE, "..", "python", "engines"))
PYTHON = os.path.normpath(os.path.join(HERE, "..", "..", "capi", "python"))
os.environ["PYTHONPATH"] = os.pathsep.join([ENGINES, PYTHON, os.environ.get("PYTHONPATH", "")])
sys.path[:0] = [ENGINES, PYTHON]

import lode  # noqa: E402
from pg_server import Server, copy_rows  # noqa: E402

ITEMS = [f"q{j + 1}" for j in range(30)]
FACTORS = 2
CHUNK = 1_000_000


def chunks(n_rows):
    """The rows in blocks of at most CHUNK, each from its own seed (so any n is reproducible)."""
    from postgres_checks import ordinal
    done, k = 0, 0
    while done < n_rows:
        m = min(CHUNK, n_rows - done)
        yield ordinal(m, len(ITEMS), 20261203 + k)
        done += m
        k += 1


def csv_bytes(block):
    """Fixed-width CSV of one block: codes 1..9, 'x' for a skipped answer."""
    n, p = block.shape
    text = np.full((n, 2 * p), ord(","), dtype=np.uint8)
    text[:, 0::2] = np.where(np.isnan(block), ord("x"), np.nan_to_num(block).astype(np.int64) + ord("0"))
    text[:, -1] = ord("\n")
    return text.tobytes()


def timed(fn):
    start, cpu = time.perf_counter(), time.process_time()
    value = fn()
    return value, time.perf_counter() - start, time.process_time() - cpu


def export_rows(conn):
    import pandas as pd
    from psycopg2 import sql
    buf = io.BytesIO()
    with conn.cursor() as cur:
        cur.copy_expert(sql.SQL("COPY (SELECT {} FROM answers) TO STDOUT WITH (FORMAT csv)").format(
            sql.SQL(", ").join(sql.Identifier(c) for c in ITEMS)).as_string(conn), buf)
    conn.rollback()
    buf.seek(0)
    return pd.read_csv(buf, header=None, dtype=float, engine="c").to_numpy()


def postgres_routes(server, n_rows, results, sizes):
    from psycopg2 import sql
    conn = server.connect()
    with conn.cursor() as cur:
        cur.execute(sql.SQL("CREATE TABLE answers ({})").format(
            sql.SQL(", ").join(sql.SQL("{} smallint").format(sql.Identifier(c)) for c in ITEMS)))
    conn.commit()
    start = time.perf_counter()
    for block in chunks(n_rows):
        copy_rows(conn, "answers", ITEMS, block, ident=sql)
    with conn.cursor() as cur:
        cur.execute("SELECT pg_total_relation_size('answers')")
        sizes["table_bytes"] = int(cur.fetchone()[0])
    conn.commit()
    print(f"loaded {n_rows:,} rows into PostgreSQL in {time.perf_counter() - start:.0f} s", flush=True)

    s, t_sum, c_sum = timed(lambda: lode.summary_from_sql(conn, "answers", ITEMS))
    m_sql, t_fit, c_fit = timed(lambda: lode.fit(summary=s, factors=FACTORS))
    sizes["summary_bytes"] = len(s.to_bytes())
    print(f"SQL summary {t_sum:.1f} s, fit {t_fit:.3f} s", flush=True)
    x, t_exp, c_exp = timed(lambda: export_rows(conn))
    m_mem, t_mem, c_mem = timed(lambda: lode.fit(x, factors=FACTORS))
    print(f"export {t_exp:.1f} s, fit in memory {t_mem:.1f} s", flush=True)
    conn.close()
    if x.shape != (n_rows, len(ITEMS)):
        raise SystemExit(f"the export gave {x.shape}, not {n_rows} x {len(ITEMS)}")
    gap = float(np.max(np.abs(m_sql.loadings - m_mem.loadings)))
    results.append({"case": "postgres_summary", "route": "PostgreSQL: SQL summary, then fit",
                    "median_s": t_sum + t_fit, "client_cpu_s": c_sum + c_fit,
                    "parts": {"summary": t_sum, "fit": t_fit}, "loadings_gap": gap})
    results.append({"case": "postgres_export", "route": "PostgreSQL: export the rows, fit in memory",
                    "median_s": t_exp + t_mem, "client_cpu_s": c_exp + c_mem,
                    "parts": {"export": t_exp, "fit": t_mem}})
    return m_mem.loadings


def dask_routes(n_rows, workers, results, reference):
    from dask.distributed import Client, LocalCluster
    import dask
    import dask.dataframe as dd
    import dask_parts
    with tempfile.TemporaryDirectory(prefix="lode-bench-dask-") as folder:
        header = (",".join(ITEMS) + "\n").encode()
        for k, block in enumerate(chunks(n_rows)):
            with open(os.path.join(folder, f"answers-{k:03d}.csv"), "wb") as f:
                f.write(header + csv_bytes(block))
        for w in workers:
            with LocalCluster(n_workers=w, threads_per_worker=1, processes=True, dashboard_address=None,
                              host="127.0.0.1") as cluster, Client(cluster):
                def run():
                    frame = dd.read_csv(os.path.join(folder, "answers-*.csv"), na_values=["x"], dtype=float,
                                        blocksize=64e6)
                    parts = [dask.delayed(dask_parts.summarise)(p, ITEMS) for p in frame.to_delayed()]
                    return dask_parts.tree_merge(parts).compute(), frame.npartitions
                (s, nparts), t_sum, c_sum = timed(run)
                m, t_fit, c_fit = timed(lambda: lode.fit(summary=s, factors=FACTORS))
            if s.n_rows != n_rows:
                raise SystemExit(f"Dask summarised {s.n_rows} rows, not {n_rows}")
            print(f"Dask {w} worker(s): {nparts} partitions in {t_sum:.1f} s, fit {t_fit:.3f} s", flush=True)
            results.append({"case": f"dask_w{w}", "route": f"Dask, {w} worker process{'es' if w > 1 else ''}: "
                            "summaries per partition, tree merge, then fit",
                            "median_s": t_sum + t_fit, "client_cpu_s": c_sum + c_fit, "partitions": nparts,
                            "parts": {"summary": t_sum, "fit": t_fit},
                            "loadings_gap": float(np.max(np.abs(m.loadings - reference)))})


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("out")
    ap.add_argument("--rows", type=int, default=10_000_000)
    ap.add_argument("--workers", default="1,2")
    args = ap.parse_args()
    results, sizes = [], {"data_bytes": args.rows * len(ITEMS) * 8}
    server = Server()
    try:
        reference = postgres_routes(server, args.rows, results, sizes)
    finally:
        server.stop()
    dask_routes(args.rows, [int(w) for w in args.workers.split(",")], results, reference)
    for r in results:
        # The routes add the same rows in another order: loadings agree to rounding (common practice:
        # 1e-8 leaves room for the ML iteration's stopping rule, which is far looser than rounding).
        if r.get("loadings_gap", 0.0) > 1e-8:
            raise SystemExit(f"{r['route']}: loadings differ from the in-memory fit by {r['loadings_gap']:.2e}")
    doc = {"rows": args.rows, "items": len(ITEMS), "factors": FACTORS, "results": results, "sizes": sizes,
           "peak_rss_bytes": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024}
    with open(args.out, "w") as f:
        json.dump(doc, f, indent=1)


if __name__ == "__main__":
    main()
