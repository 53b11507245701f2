"""The Calc extension as a user downloads it: the .oxt from dist/ (LODE_DIST_OXT), installed into a
fresh LibreOffice profile with unopkg (tests/office/office.py), and a few LODE.* formulas checked
against numpy and against the C library that the same .oxt carries (through the Python binding).

Data: R's 'datasets' package, attitude (Chatterjee and Price 1977; 30 x 7), shipped by Debian's
r-base-core.
"""

import atexit
import os
import re
import shutil
import sys
import tempfile
import zipfile

import numpy as np
import pytest

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "office"))
sys.path.insert(0, os.path.join(HERE, "..", "..", "capi", "python"))

from office import Office, fill, range_name  # noqa: E402
from refs import r_dataset  # noqa: E402

OXT = os.environ.get("LODE_DIST_OXT", "")
if not os.path.exists(OXT):
    pytest.fail(f"LODE_DIST_OXT must name the .oxt in dist/ (./lode package writes it): {OXT!r}", pytrace=False)
VERSION = re.match(r"lode-(.+)-linux-x86_64\.oxt$", os.path.basename(OXT)).group(1)

# The C library for the reference values: the liblode inside this very .oxt.
_lib_dir = tempfile.mkdtemp(prefix="lode-oxt-lib-")
atexit.register(shutil.rmtree, _lib_dir, True)
with zipfile.ZipFile(OXT) as _z:
    (_so,) = [n for n in _z.namelist() if re.fullmatch(r"liblode\.so\.\d+", n)]
    _z.extract(_so, _lib_dir)
os.environ["LODE_LIBRARY"] = os.path.join(_lib_dir, _so)
import lode  # noqa: E402

U = np.finfo(float).eps / 2  # unit roundoff of double precision


@pytest.fixture(scope="module")
def sheet():
    with Office(OXT) as office:
        with office.watchdog(60):
            doc = office.new_calc()
        yield office, doc.Sheets.getByIndex(0)
        with office.watchdog(60):
            doc.close(True)


@pytest.fixture(scope="module")
def attitude(sheet):
    office, s = sheet
    names, x = r_dataset("attitude")
    with office.watchdog(60):
        fill(s, 0, 0, [names] + x.tolist())
    return x, range_name(0, 0, x.shape[1], x.shape[0] + 1)


def _cells(sheet, formula, rows, cols, left=10):
    office, s = sheet
    with office.watchdog():
        rng = s.getCellRangeByPosition(left, 0, left + cols - 1, rows - 1)
        rng.setArrayFormula(formula)
        values = rng.getDataArray()
        errors = [s.getCellByPosition(left + j, i).getError() for i in range(rows) for j in range(cols)]
    assert not any(errors), f"{formula} gave error cells: {errors}"
    return values


def test_version_is_the_packaged_one(sheet):
    (v,), = _cells(sheet, "=LODE.VERSION()", 1, 1)
    assert v.startswith(f"Lode {VERSION}") and "C ABI 2." in v, v
    assert lode.version()["version"] == VERSION


def test_corr_and_eigen_match_numpy(sheet, attitude):
    x, rng = attitude
    n, p = x.shape
    corr = np.array(_cells(sheet, f"=LODE.CORR({rng})", p, p), dtype=float)
    ref = np.corrcoef(x, rowvar=False)
    # numpy.corrcoef. Each entry is a sum of n products of centred values over the product of two
    # norms, good on each side to about n unit roundoffs (times the scale, 1 for a correlation), plus
    # a few roundings in centring and scaling: 2 sides x (n + 10) u.
    corr_tol = 2 * (n + 10) * U
    assert np.max(np.abs(corr - ref)) <= corr_tol
    eig = np.array(_cells(sheet, f"=LODE.EIGEN({rng})", p, 1, left=20), dtype=float)[:, 0]
    ref_eig = np.sort(np.linalg.eigvalsh(ref))[::-1]
    # numpy.linalg.eigvalsh: an eigenvalue moves by at most the 2-norm of the perturbation (Weyl),
    # <= p x the largest entry error; each symmetric eigensolver is backward stable to about
    # p u ||R|| (||R|| <= p for a correlation matrix), both sides counted, 10 x for the constants.
    eig_tol = p * corr_tol + 2 * 10 * p * U * p
    assert np.max(np.abs(eig - ref_eig)) <= eig_tol


def test_loadings_match_the_c_library_in_the_oxt(sheet, attitude):
    x, rng = attitude
    p = x.shape[1]
    cells = np.array(_cells(sheet, f'=LODE.LOADINGS({rng};2;"ml";"varimax")', p, 2, left=30), dtype=float)
    m = lode.fit(x, factors=2, method="ml", rotation="varimax")
    assert m.converged
    # The same library on the same doubles; the fit stops at its convergence tolerance (1e-9 by
    # default), which bounds any difference a different order of summation could make.
    assert np.max(np.abs(cells - m.loadings)) < 1e-8
