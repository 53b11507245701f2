"""Summaries computed by a real Dask LocalCluster (2 worker processes on the loopback interface,
started here): a dask dataframe read in partitions from CSV files, a summary per partition, a tree
reduction with merge; the same counts, tables, Pearson and polychoric correlations as the rows in
memory. Run as a script (worker processes are spawned: the cluster starts under __main__)."""

import os
import sys
import tempfile
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
PYTHON = os.path.normpath(os.path.join(HERE, "..", "..", "..", "capi", "python"))
# The workers are new processes: they find lode and dask_parts through PYTHONPATH.
os.environ["PYTHONPATH"] = os.pathsep.join([HERE, PYTHON, os.environ.get("PYTHONPATH", "")])
sys.path[:0] = [HERE, PYTHON]

import lode  # noqa: E402
import dask_parts  # noqa: E402
from postgres_checks import ordinal, ITEMS  # noqa: E402

N_ROWS = int(os.environ.get("LODE_DASK_ROWS", "1000000"))
FILES = 8


def write_parts(folder, x):
    """CSV files of fixed-width rows (codes 1..9, 'x' = skipped), written by numpy."""
    header = (",".join(ITEMS) + "\n").encode()
    for k, block in enumerate(np.array_split(x, FILES)):
        n, p = block.shape
        text = np.full((n, 2 * p), ord(","), dtype=np.uint8)
        text[:, 0::2] = np.where(np.isnan(block), ord("x"), np.nan_to_num(block).astype(np.int64) + ord("0"))
        text[:, -1] = ord("\n")
        with open(os.path.join(folder, f"answers-{k:02d}.csv"), "wb") as f:
            f.write(header + text.tobytes())


def summary_on(client, folder):
    import dask
    import dask.dataframe as dd
    frame = dd.read_csv(os.path.join(folder, "answers-*.csv"), na_values=["x"], dtype=float, blocksize=16e6)
    parts = [dask.delayed(dask_parts.summarise)(part, ITEMS) for part in frame.to_delayed()]
    start = time.perf_counter()
    s = dask_parts.tree_merge(parts).compute()
    return s, frame.npartitions, time.perf_counter() - start


def main():
    from dask.distributed import Client, LocalCluster
    x = ordinal(N_ROWS, len(ITEMS), 2027)
    with tempfile.TemporaryDirectory(prefix="lode-dask-") as folder:
        write_parts(folder, x)
        with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None,
                          host="127.0.0.1") as cluster, Client(cluster) as client:
            s, parts, seconds = summary_on(client, folder)
    print(f"Dask, 2 workers: {parts} partitions summarised and merged in {seconds:.1f} s")
    m = lode.Summary(items=ITEMS).add(x)
    assert s.n_rows == N_ROWS, s.n_rows
    assert np.array_equal(s.pair_counts, m.pair_counts)
    assert np.array_equal(s.matrix("category_counts"), m.matrix("category_counts"), equal_nan=True)
    for a in range(len(ITEMS)):
        for b in range(a + 1, len(ITEMS)):
            assert np.array_equal(s.table(a, b), m.table(a, b)), (a, b)
    raw = lode.correlation(x)
    r = lode.correlation(summary=s)
    assert np.max(np.abs(r.matrix - raw.matrix)) < 1e-10
    assert r.n_obs == raw.n_obs and np.array_equal(r.pair_counts, raw.pair_counts)
    poly = lode.correlation(summary=s, method="polychoric")
    poly_raw = lode.correlation(x, method="polychoric")
    assert np.max(np.abs(poly.matrix - poly_raw.matrix)) < 1e-10
    print("Dask summary equals the rows in memory (counts, tables, Pearson, polychoric)")


if __name__ == "__main__":
    main()
