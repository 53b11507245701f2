"""A headless LibreOffice of the tests' own, with the built lode.oxt installed.

Runs under Debian's /usr/bin/python3 (python3-uno). The harness:
  1. makes a throwaway folder and initialises a fresh user profile in it (a first start on a new
     profile drops user-extension registrations, so the profile is initialised before installing);
  2. installs the .oxt with unopkg (as the unprivileged user 'nobody' when run as root, because
     unopkg refuses per-user installs as root);
  3. starts soffice listening on a private pipe and connects;
  4. stops soffice by its process id (terminate over UNO, then SIGTERM/SIGKILL to the process group
     it started), and removes the folder.
Every wait has a time limit; a watchdog kills soffice if a UNO call hangs, so a test fails instead
of blocking.
"""

import os
import shutil
import signal
import subprocess
import tempfile
import threading
import time
import uuid

import uno  # noqa: F401  (Debian's python3-uno)
from com.sun.star.beans import PropertyValue
from com.sun.star.connection import NoConnectException
from com.sun.star.table import CellRangeAddress

SOFFICE = os.environ.get("LODE_SOFFICE", "soffice")
UNOPKG = os.environ.get("LODE_UNOPKG", "unopkg")


def _prop(name, value):
    p = PropertyValue()
    p.Name = name
    p.Value = value
    return p


def _as_nobody():
    return os.geteuid() == 0


def _run(cmd, timeout, env=None, user=None):
    """Runs cmd (as `user` when given) and returns its output; raises with the output on failure.
    As another user it starts in "/": runuser keeps the current folder, and a checkout in a folder that
    user cannot enter (root's home, any mktemp -d folder: mode 0700) would stop soffice's start script."""
    cwd = None
    if user:
        cmd = ["runuser", "-u", user, "--"] + cmd
        cwd = "/"
    proc = subprocess.run(cmd, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, timeout=timeout, env=env, text=True,
                          cwd=cwd)
    if proc.returncode != 0:
        raise RuntimeError(f"{' '.join(cmd)} failed ({proc.returncode}):\n{proc.stdout}")
    return proc.stdout


class Office:
    """with Office(oxt) as office: doc = office.new_calc() ..."""

    def __init__(self, oxt, start_timeout=90, call_timeout=120):
        self.oxt = os.path.abspath(oxt)
        self.start_timeout = start_timeout
        self.call_timeout = call_timeout
        self.dir = None
        self.proc = None
        self.ctx = None
        self.desktop = None
        self.timings = {}

    # ---- lifecycle -----------------------------------------------------------------------------
    def __enter__(self):
        try:
            self.start()
        except BaseException:
            self.stop()
            raise
        return self

    def __exit__(self, *exc):
        self.stop()
        return False

    def _env(self):
        env = dict(os.environ)
        env["HOME"] = self.dir  # nothing of the real user's profile or caches is touched
        env.pop("DISPLAY", None)
        # URE_MORE_TYPES tells this Python the report service's types (a file in the build folder); soffice
        # gets them from the extension, and as 'nobody' it cannot open a file inside a private checkout.
        env.pop("URE_MORE_TYPES", None)
        env["SAL_USE_VCLPLUGIN"] = "svp"
        return env

    def start(self):
        t0 = time.monotonic()
        self.dir = tempfile.mkdtemp(prefix="lode-office-")
        os.chmod(self.dir, 0o755)
        self.profile_url = "file://" + os.path.join(self.dir, "profile")
        user = "nobody" if _as_nobody() else None
        oxt = os.path.join(self.dir, "lode.oxt")
        shutil.copy(self.oxt, oxt)
        if user:
            shutil.chown(self.dir, "nobody", "nogroup")
            shutil.chown(oxt, "nobody", "nogroup")
        env = self._env()
        profile_arg = "-env:UserInstallation=" + self.profile_url
        _run([SOFFICE, "--headless", "--norestore", "--terminate_after_init", profile_arg], 120, env, user)
        _run([UNOPKG, "add", "--suppress-license", profile_arg, oxt], 120, env, user)
        self.timings["profile_and_install_s"] = time.monotonic() - t0

        self.pipe = "lode_test_" + uuid.uuid4().hex[:12]
        cmd = [SOFFICE, "--headless", "--invisible", "--norestore", "--nologo", "--nodefault", "--nolockcheck",
               profile_arg, f"--accept=pipe,name={self.pipe};urp;StarOffice.ComponentContext"]
        self.proc = subprocess.Popen(cmd, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                                     start_new_session=True)
        local = uno.getComponentContext()
        resolver = local.ServiceManager.createInstanceWithContext("com.sun.star.bridge.UnoUrlResolver", local)
        deadline = time.monotonic() + self.start_timeout
        t1 = time.monotonic()
        while True:
            if self.proc.poll() is not None:
                raise RuntimeError(f"soffice exited with {self.proc.returncode} before accepting connections")
            try:
                self.ctx = resolver.resolve(f"uno:pipe,name={self.pipe};urp;StarOffice.ComponentContext")
                break
            except NoConnectException:
                if time.monotonic() > deadline:
                    raise RuntimeError(f"soffice did not accept a connection within {self.start_timeout} s")
                time.sleep(0.2)
        self.smgr = self.ctx.ServiceManager
        self.desktop = self.smgr.createInstanceWithContext("com.sun.star.frame.Desktop", self.ctx)
        self.timings["start_to_connect_s"] = time.monotonic() - t1

    def alive(self):
        return self.proc is not None and self.proc.poll() is None

    def _kill_group(self, sig):
        try:
            os.killpg(self.proc.pid, sig)  # the group soffice was started in (start_new_session)
        except ProcessLookupError:
            pass

    def stop(self):
        if self.proc is not None and self.proc.poll() is None:
            try:
                with self.watchdog(20):
                    self.desktop.terminate()
            except Exception:
                pass
            try:
                self.proc.wait(timeout=20)
            except subprocess.TimeoutExpired:
                self._kill_group(signal.SIGTERM)
                try:
                    self.proc.wait(timeout=10)
                except subprocess.TimeoutExpired:
                    self._kill_group(signal.SIGKILL)
                    self.proc.wait(timeout=10)
        if self.proc is not None:  # soffice.bin (a child of oosplash) must not outlive us
            self._kill_group(signal.SIGKILL)
        self.proc = None
        if self.dir:
            shutil.rmtree(self.dir, ignore_errors=True)
            self.dir = None

    class _Watchdog:
        def __init__(self, office, seconds):
            self.office, self.seconds, self.fired = office, seconds, False
            self.timer = threading.Timer(seconds, self._fire)

        def _fire(self):
            self.fired = True
            if self.office.proc is not None:
                self.office._kill_group(signal.SIGKILL)

        def __enter__(self):
            self.timer.start()
            return self

        def __exit__(self, exc_type, exc, tb):
            self.timer.cancel()
            if self.fired:
                raise TimeoutError(f"LibreOffice did not answer within {self.seconds} s (killed)")
            return False

    def watchdog(self, seconds=None):
        """with office.watchdog(30): <UNO calls>  -- kills soffice (and fails) if they take longer."""
        return Office._Watchdog(self, seconds or self.call_timeout)

    # ---- documents -----------------------------------------------------------------------------
    def new_calc(self):
        with self.watchdog(60):
            return self.desktop.loadComponentFromURL("private:factory/scalc", "_blank", 0, (_prop("Hidden", True),))


def fill(sheet, top, left, rows):
    """Writes a list of rows (numbers, strings or None for empty) starting at (top, left), 0-based."""
    if not rows:
        return
    ncols = max(len(r) for r in rows)
    rng = sheet.getCellRangeByPosition(left, top, left + ncols - 1, top + len(rows) - 1)
    data = []
    for r in rows:
        row = []
        for v in list(r) + [None] * (ncols - len(r)):
            row.append("" if v is None else (float(v) if isinstance(v, (int, float)) else str(v)))
        data.append(tuple(row))
    rng.setDataArray(tuple(data))
    # setDataArray writes "" as an empty string cell; clear those so they are truly empty
    for i, r in enumerate(rows):
        for j, v in enumerate(list(r) + [None] * (ncols - len(r))):
            if v is None:
                sheet.getCellByPosition(left + j, top + i).setFormula("")


def address(col, row):
    """0-based (col, row) -> 'A1' style."""
    name = ""
    col += 1
    while col:
        col, rem = divmod(col - 1, 26)
        name = chr(65 + rem) + name
    return f"{name}{row + 1}"


def range_name(left, top, cols, rows):
    return f"{address(left, top)}:{address(left + cols - 1, top + rows - 1)}"


def array_formula(sheet, left, top, cols, rows, formula):
    rng = sheet.getCellRangeByPosition(left, top, left + cols - 1, top + rows - 1)
    rng.setArrayFormula(formula)
    return rng


def read_block(sheet, left, top, cols, rows):
    """Cell results as a list of rows; a number cell gives a float, a text cell a str, an error cell
    the tuple ('error', code)."""
    out = []
    for i in range(rows):
        row = []
        for j in range(cols):
            cell = sheet.getCellByPosition(left + j, top + i)
            err = cell.getError()
            if err:
                row.append(("error", err))
            elif cell.getType().value == "TEXT" or (cell.getType().value == "FORMULA" and cell.FormulaResultType2 == 2):
                row.append(cell.getString())
            else:
                row.append(cell.getValue())
        out.append(row)
    return out


__all__ = ["Office", "fill", "address", "range_name", "array_formula", "read_block", "CellRangeAddress"]
