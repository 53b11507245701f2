"""The analysis dialog in a real LibreOffice window, under Xvfb (ctest office_dialog runs this file
through xvfb-run). The test opens the demo workbook, selects a cell of the responses, sends the menu
entry's URL (org.lode.calc:analyse) to the frame, finds the dialog among the toolkit's top windows,
reads its controls through the accessibility tree, takes a screenshot into the build folder and
presses Run. The report then runs in the background (status bar) and shows its overview when done;
the test checks what the dialog passed on and takes screenshots of the finished report. Screenshots:
$LODE_REPORT_DIR/lode-dialog.png, lode-report.png, lode-report-scree.png, lode-report-loadings.png,
lode-report-reliability.png, lode-report-scores.png.
"""

import os
import shutil
import subprocess
import threading
import time

import pytest
import uno  # noqa: F401  (its local context has read URE_MORE_TYPES by now)

# URE_MORE_TYPES is for this Python only (it must know the service's interface). soffice must not
# inherit it: it would replace the office's own list, which brings in the installed extensions' types.
os.environ.pop("URE_MORE_TYPES", None)
from com.sun.star.beans import PropertyValue
from com.sun.star.accessibility.AccessibleRole import CHECK_BOX, COMBO_BOX, PUSH_BUTTON
from com.sun.star.connection import NoConnectException

from office import SOFFICE, UNOPKG, Office, _run

HERE = os.path.dirname(os.path.abspath(__file__))
SHEETS = os.path.join(HERE, "..", "..", "example-sheets")
OUT = os.environ.get("LODE_REPORT_DIR", os.getcwd())
TITLE = "Lode: find the factors behind a set of items"
SAGE = (0xF4, 0xF7, 0xF1)  # the dialog's background colour (dialog.cpp)


class WindowedOffice(Office):
    """The harness's office, but with windows on the X display Xvfb provides."""

    def _env(self):
        env = super()._env()
        env["DISPLAY"] = os.environ["DISPLAY"]
        env.pop("SAL_USE_VCLPLUGIN", None)
        env["SAL_USE_VCLPLUGIN"] = "gen"
        return env

    def start(self):
        import tempfile
        import uuid
        self.dir = tempfile.mkdtemp(prefix="lode-office-")
        os.chmod(self.dir, 0o755)
        self.profile_url = "file://" + os.path.join(self.dir, "profile")
        user = "nobody" if os.geteuid() == 0 else None
        oxt = os.path.join(self.dir, "lode.oxt")
        shutil.copy(self.oxt, oxt)
        if user:
            shutil.chown(self.dir, "nobody", "nogroup")
            shutil.chown(oxt, "nobody", "nogroup")
        env = self._env()
        profile_arg = "-env:UserInstallation=" + self.profile_url
        _run([SOFFICE, "--headless", "--norestore", "--terminate_after_init", profile_arg], 120, env, user)
        _run([UNOPKG, "add", "--suppress-license", profile_arg, oxt], 120, env, user)
        self.pipe = "lode_test_" + uuid.uuid4().hex[:12]
        cmd = [SOFFICE, "--norestore", "--nologo", "--nodefault", "--nolockcheck", profile_arg,
               f"--accept=pipe,name={self.pipe};urp;StarOffice.ComponentContext"]
        self.proc = subprocess.Popen(cmd, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                                     start_new_session=True)
        local = uno.getComponentContext()
        resolver = local.ServiceManager.createInstanceWithContext("com.sun.star.bridge.UnoUrlResolver", local)
        deadline = time.monotonic() + self.start_timeout
        while True:
            if self.proc.poll() is not None:
                raise RuntimeError(f"soffice exited with {self.proc.returncode}")
            try:
                self.ctx = resolver.resolve(f"uno:pipe,name={self.pipe};urp;StarOffice.ComponentContext")
                break
            except NoConnectException:
                if time.monotonic() > deadline:
                    raise RuntimeError("soffice did not accept a connection")
                time.sleep(0.2)
        self.smgr = self.ctx.ServiceManager
        self.desktop = self.smgr.createInstanceWithContext("com.sun.star.frame.Desktop", self.ctx)


@pytest.fixture(scope="module")
def windowed():
    if not os.environ.get("DISPLAY"):
        pytest.fail("no DISPLAY: run under xvfb-run (ctest office_dialog does)")
    with WindowedOffice(os.environ["LODE_OXT"]) as o:
        yield o


def screenshot(name):
    path = os.path.join(OUT, name)
    subprocess.run(["import", "-window", "root", path], check=True, timeout=60)
    return path


def pixels_of(path, rgb):
    """How many pixels of the image have exactly this colour (ImageMagick)."""
    colour = "#%02X%02X%02X" % rgb
    out = subprocess.run(["convert", path, "-alpha", "off", "-fill", "black", "+opaque", colour, "-fill", "white",
                          "-opaque", colour, "-format", "%[fx:round(mean*w*h)]", "info:"],
                         capture_output=True, text=True, check=True, timeout=60).stdout
    return int(float(out.strip()))


def accessible_names(acc, depth=0, out=None):
    """Names (and edit texts) of every accessible object below `acc`."""
    out = [] if out is None else out
    ctx = acc.getAccessibleContext()
    if ctx is None or depth > 12:
        return out
    out.append(ctx.getAccessibleName())
    if hasattr(ctx, "getText"):
        try:
            out.append(ctx.getText())
        except Exception:
            pass
    for i in range(ctx.getAccessibleChildCount()):
        accessible_names(ctx.getAccessibleChild(i), depth + 1, out)
    return out


def find_accessible(acc, name, depth=0, role=PUSH_BUTTON):
    ctx = acc.getAccessibleContext()
    if ctx is None or depth > 12:
        return None
    if ctx.getAccessibleName() == name and ctx.getAccessibleRole() == role:
        return acc
    for i in range(ctx.getAccessibleChildCount()):
        hit = find_accessible(ctx.getAccessibleChild(i), name, depth + 1, role)
        if hit is not None:
            return hit
    return None


def choose(dialog, dropdown, entry):
    """Selects `entry` in the dropdown named `dropdown` through its accessible list (as a screen
    reader would); returns the entries offered."""
    combo = find_accessible(dialog, dropdown, role=COMBO_BOX)
    assert combo is not None, f"no dropdown {dropdown!r}"
    lst = combo.getAccessibleContext().getAccessibleChild(1).getAccessibleContext()
    entries = [lst.getAccessibleChild(i).getAccessibleContext().getAccessibleName()
               for i in range(lst.getAccessibleChildCount())]
    lst.selectAccessibleChild(entries.index(entry))
    return entries


def find_dialog(office, timeout=60):
    tk = office.smgr.createInstanceWithContext("com.sun.star.awt.Toolkit", office.ctx)
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        for i in range(tk.getTopWindowCount()):
            w = tk.getTopWindow(i)
            if hasattr(w, "getTitle") and w.getTitle() == TITLE:
                return w
        time.sleep(0.3)
    return None


def open_dialog(windowed, frame):
    """Sends the menu entry's URL to `frame` on a thread of its own (the dialog is modal) and finds the
    dialog; returns the thread, the exceptions the dispatch raised (it must raise none) and the dialog."""
    helper = windowed.smgr.createInstanceWithContext("com.sun.star.frame.DispatchHelper", windowed.ctx)
    errors = []

    def send():
        try:
            helper.executeDispatch(frame, "org.lode.calc:analyse", "", 0, ())
        except Exception as e:  # reported by the main thread
            errors.append(e)

    t = threading.Thread(target=send, daemon=True)
    t.start()
    with windowed.watchdog(120):
        dialog = find_dialog(windowed)
    assert dialog is not None, f"the dialog did not appear ({errors})"
    return t, errors, dialog


def press_run(windowed, dialog, t, errors):
    """Presses Run through its accessible action (as a screen reader would); the dispatch then returns
    (the run goes on in the background) without an exception."""
    with windowed.watchdog(60):
        run = find_accessible(dialog, "Run")
        assert run is not None, "no Run button"
        run.getAccessibleContext().doAccessibleAction(0)
        t.join(30)
    assert not t.is_alive() and not errors, errors


def test_dialog_opens_from_the_menu_url_with_its_controls(windowed):
    path = os.path.join(windowed.dir, "survey.ods")
    shutil.copy(os.path.join(SHEETS, "volunteer-survey.ods"), path)
    os.chmod(path, 0o666)
    with windowed.watchdog(120):
        doc = windowed.desktop.loadComponentFromURL(uno.systemPathToFileUrl(path), "_blank", 0, ())
        ctrl = doc.getCurrentController()
        sheet = doc.Sheets.getByName("Responses")
        ctrl.setActiveSheet(sheet)
        ctrl.select(sheet.getCellRangeByName("C5"))  # one cell: the dialog takes the block around it
    t, errors, dialog = open_dialog(windowed, ctrl.getFrame())
    with windowed.watchdog(120):
        # Ask for factor scores (regression, beside the data) and bootstrap intervals (500 resamples,
        # the field's default): the options this run must pass on.
        offered = choose(dialog, "Factor scores", "Regression")
        assert offered == ["None", "Regression", "Bartlett", "Correlation-preserving"], offered
        assert choose(dialog, "Extraction", "Maximum likelihood (fit tests)") == [
            "Maximum likelihood (fit tests)", "Principal axis", "Least squares residuals"]
        assert choose(dialog, "Put the scores", "Beside the data, if empty")[1] == "On a sheet of their own"
        # the group comparison offers every column of the range after "No comparison" (kept: no groups)
        groups = choose(dialog, "Compare groups by", "No comparison")
        assert groups[0] == "No comparison" and "ROL1" in groups and len(groups) == 32, groups
        box = find_accessible(dialog, "Bootstrap intervals", role=CHECK_BOX)
        assert box is not None, "no Bootstrap intervals check box"
        box.getAccessibleContext().doAccessibleAction(0)
        # and both checks of the structure, with the numbers the dialog proposes (0.5 held out, 100 splits)
        for label in ["Hold out respondents for a confirmatory check", "Replicate in random halves"]:
            check = find_accessible(dialog, label, role=CHECK_BOX)
            assert check is not None, f"no {label!r} check box"
            check.getAccessibleContext().doAccessibleAction(0)
        time.sleep(1.5)  # let it paint
        names = accessible_names(dialog)
    shot = screenshot("lode-dialog.png")
    for want in ["Range", "First row holds the item names", "Items to analyse (all with numbers are chosen)",
                 "Correlations", "Missing answers", "Factors to keep", "0: as the evidence suggests", "Extraction",
                 "Rotation", "Factor scores", "Bootstrap intervals", "Strong loading from", "Random seed",
                 "Hold out respondents for a confirmatory check", "Share held out", "Replicate in random halves", "Splits",
                 "Compare groups by", "Smallest group", "Run", "Cancel"]:
        assert want in names, f"control {want!r} not found in the dialog: {names}"
    assert "$Responses.$A$1:$AE$421" in names, "the range is not prefilled from the selection"
    sage = pixels_of(shot, SAGE)
    assert sage > 20000, f"only {sage} pixels of the dialog's background colour on screen"
    # Press Run (through its accessible action, as a screen reader would): the handler starts the
    # report in the background with the frame's status indicator and shows the overview when done.
    press_run(windowed, dialog, t, errors)
    deadline = time.monotonic() + 240
    with windowed.watchdog(300):
        while time.monotonic() < deadline:
            if ctrl.getActiveSheet().getName() == "Lode overview":
                break
            time.sleep(0.5)
        assert ctrl.getActiveSheet().getName() == "Lode overview", "the report did not finish and show itself"
        names = list(doc.Sheets.ElementNames)
        for n in ["Lode overview", "Lode loadings", "Lode factors", "Lode scree", "Lode halves",
                  "Lode new respondents", "Lode run record"]:
            assert n in names
        # what the dialog passed on: the detected header, every numeric column, the defaults shown
        rr = doc.Sheets.getByName("Lode run record")
        rec = {rr.getCellByPosition(0, r).String: rr.getCellByPosition(1, r).String for r in range(40)}
        assert rec["Source range"] == "$Responses.$A$1:$AE$421" and rec["First row holds item names"] == "yes"
        assert rec["Items"].split(", ")[0] == "ROL1" and len(rec["Items"].split(", ")) == 30
        assert rec["Correlations"] == "Pearson" and rec["Random seed"] == "20260101"
        assert rec["Factor scores"] == "Regression" and rec["Factor scores placed"] == "Beside the data, if empty"
        assert rec["Factor scores written to"].endswith("of Responses, beside the data")
        assert rec["Bootstrap resamples"] == "500" and rec["Bootstrap seed"].startswith("20260101 ")
        assert rec["Random splits into halves"] == "100" and rec["Share held out (confirmatory check)"] == "0.5"
        assert rec["Groups compared by"] == "none"
        # the score columns start right of the answers (AE), with their headings
        assert doc.Sheets.getByName("Responses").getCellRangeByName("AF1").String == "Factor 1 score (regression)"
    time.sleep(2)
    screenshot("lode-report.png")
    with windowed.watchdog(60):
        ctrl.setActiveSheet(doc.Sheets.getByName("Lode scree"))
    time.sleep(2)
    screenshot("lode-report-scree.png")
    with windowed.watchdog(60):
        ctrl.setActiveSheet(doc.Sheets.getByName("Lode loadings"))
    time.sleep(2)
    screenshot("lode-report-loadings.png")
    with windowed.watchdog(60):
        fs = doc.Sheets.getByName("Lode factors")
        row = next(r for r in range(400) if fs.getCellByPosition(0, r).String == "Reliability of each factor's scale")
        ctrl.setActiveSheet(fs)
        ctrl.select(fs.getCellByPosition(0, row + 40))  # scrolls the section into view
        ctrl.select(fs.getCellByPosition(0, row))
    time.sleep(2)
    screenshot("lode-report-reliability.png")
    with windowed.watchdog(60):
        resp = doc.Sheets.getByName("Responses")
        ctrl.setActiveSheet(resp)
        ctrl.select(resp.getCellRangeByName("AF1"))
    time.sleep(2)
    screenshot("lode-report-scores.png")

    # The service called directly writes a second report beside the first.
    svc = windowed.smgr.createInstanceWithContext("org.lode.calc.AnalysisReport", windowed.ctx)
    a = uno.createUnoStruct("com.sun.star.table.CellRangeAddress")
    a.Sheet, a.StartColumn, a.StartRow, a.EndColumn, a.EndRow = 0, 0, 0, 30, 420
    with windowed.watchdog(300):
        said = svc.run(doc, a, ())
    assert "Lode overview 2" in said
    with windowed.watchdog(60):
        doc.close(True)
