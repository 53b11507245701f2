"""Outside references for the office tests, run live: R (Rscript, base stats and datasets) and
numpy/scipy under Debian's /usr/bin/python3."""

import os
import subprocess
import tempfile

import numpy as np

_EMIT = r"""
emit <- function(name, x) {
  x <- as.matrix(x)
  cat(name, nrow(x), ncol(x), sprintf("%.17g", as.vector(t(x))), "\n")
}
"""


def run_r(script, inputs=None, timeout=120):
    """Runs an R script; inputs (name -> 2-D array) arrive as numeric matrices; every emit(name, x)
    comes back as a numpy array."""
    with tempfile.TemporaryDirectory() as d:
        pre = []
        for name, m in (inputs or {}).items():
            path = os.path.join(d, name + ".txt")
            np.savetxt(path, np.atleast_2d(m), fmt="%.17g")
            pre.append(f'{name} <- as.matrix(read.table("{path}", na.strings = "nan"))\n'
                       f"dimnames({name}) <- NULL\n")
        proc = subprocess.run(["Rscript", "--vanilla", "-e", _EMIT + "".join(pre) + script], capture_output=True,
                              text=True, timeout=timeout)
        if proc.returncode != 0:
            raise RuntimeError("R failed:\n" + proc.stderr)
    out = {}
    for line in proc.stdout.splitlines():
        parts = line.split()
        if len(parts) >= 3:
            name, r, c = parts[0], int(parts[1]), int(parts[2])
            out[name] = np.array([float(v.replace("NA", "nan")) for v in parts[3:3 + r * c]]).reshape(r, c)
    return out


def r_dataset(name):
    """A numeric data set shipped with R's 'datasets' package, as (column names, rows x items)."""
    proc = subprocess.run(["Rscript", "--vanilla", "-e",
                           f'x <- as.matrix(datasets::{name}); cat(colnames(x), sep="\\t"); cat("\\n");'
                           'write.table(x, sep="\\t", row.names=FALSE, col.names=FALSE)'],
                          capture_output=True, text=True, timeout=60)
    if proc.returncode != 0:
        raise RuntimeError(proc.stderr)
    lines = proc.stdout.strip().splitlines()
    names = lines[0].split("\t")
    x = np.array([[float(v) for v in line.split("\t")] for line in lines[1:]])
    return names, x


def max_diff_up_to_sign(actual, expected):
    """Largest absolute difference after matching each column's sign (factor solutions are unique
    only up to column signs)."""
    a = np.array(actual, dtype=float)
    e = np.array(expected, dtype=float)
    for j in range(a.shape[1]):
        if np.dot(a[:, j], e[:, j]) < 0:
            a[:, j] = -a[:, j]
    return float(np.max(np.abs(a - e)))
