"""A private PostgreSQL server for a test: initdb into a temporary folder, reachable only through a
unix socket in that folder (no TCP at all), run by an unprivileged account (`postgres` when the test
runs as root), stopped by its own pg_ctl."""

import glob
import io
import os
import shutil
import subprocess
import tempfile

import numpy as np

PORT = 54329  # names the socket file inside the private folder; no TCP port is opened


def _bin_dir():
    found = sorted(glob.glob("/usr/lib/postgresql/*/bin"), key=lambda p: int(p.split("/")[-2]))
    if not found:
        raise RuntimeError("PostgreSQL is not installed (Debian package postgresql; ./lode test installs it)")
    return found[-1]


class Server:
    def __init__(self):
        self.folder = tempfile.mkdtemp(prefix="lode-pg-")
        self.as_root = os.geteuid() == 0
        os.chmod(self.folder, 0o755)
        if self.as_root:
            shutil.chown(self.folder, "postgres")
        self.bin = _bin_dir()
        self.data = os.path.join(self.folder, "db")
        self._run("initdb", "-D", self.data, "-A", "trust", "-U", "postgres", "--no-sync")
        self._run("pg_ctl", "-D", self.data, "-w", "-o", f"-p {PORT} -k {self.folder} -c listen_addresses='' "
                  "-c fsync=off -c synchronous_commit=off -c full_page_writes=off",
                  "-l", os.path.join(self.folder, "pg.log"), "start")

    def _run(self, tool, *args):
        cmd = [os.path.join(self.bin, tool), *args]
        if self.as_root:
            cmd = ["runuser", "-u", "postgres", "--", *cmd]
        subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, cwd=self.folder)

    def connect(self, **kw):
        import psycopg2
        return psycopg2.connect(host=self.folder, port=PORT, user=kw.pop("user", "postgres"),
                                dbname=kw.pop("dbname", "postgres"), **kw)

    def stop(self):
        try:
            self._run("pg_ctl", "-D", self.data, "-m", "immediate", "stop")
        finally:
            shutil.rmtree(self.folder, ignore_errors=True)


def copy_rows(connection, table, columns, x, *, ident):
    """Loads the rows of x (small whole numbers 0..9, NaN = NULL) with COPY, fixed-width CSV built by
    numpy: one character per value, 'x' for NULL."""
    n, p = x.shape
    text = np.full((n, 2 * p), ord(","), dtype=np.uint8)
    cells = np.where(np.isnan(x), ord("x"), np.nan_to_num(x).astype(np.int64) + ord("0")).astype(np.uint8)
    text[:, 0::2] = cells
    text[:, -1] = ord("\n")
    with connection.cursor() as cur:
        cur.copy_expert(ident.SQL("COPY {} ({}) FROM STDIN WITH (FORMAT csv, NULL 'x')").format(
            ident.Identifier(table), ident.SQL(", ").join(ident.Identifier(c) for c in columns)).as_string(connection),
            io.BytesIO(text.tobytes()))
    connection.commit()

