"""Fixtures of the office tests: one headless LibreOffice per test session with lode.oxt installed,
and a workbook helper that places data and reads formula results."""

import os
import sys

import numpy as np
import pytest

sys.path.insert(0, os.path.dirname(__file__))
# The C library's Python binding (capi/python/lode, over LODE_LIBRARY): what the cells must equal.
sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "..", "capi", "python"))

from office import Office, address, fill  # noqa: E402


@pytest.fixture(scope="session")
def office():
    oxt = os.environ.get("LODE_OXT")
    if not oxt or not os.path.exists(oxt):
        pytest.fail("LODE_OXT must name the built lode.oxt (ctest sets it)")
    with Office(oxt) as o:
        yield o


class Book:
    """A Calc document with a 'Data' sheet for inputs and an 'Out' sheet for formulas."""

    def __init__(self, office):
        self.office = office
        self.doc = office.new_calc()
        sheets = self.doc.Sheets
        sheets.getByIndex(0).Name = "Data"
        sheets.insertNewByName("Out", 1)
        self.data = sheets.getByName("Data")
        self.out = sheets.getByName("Out")
        self.next_col = 0
        self.next_row = 0

    def put(self, x, names=None):
        """Writes a matrix (NaN = empty cell) on the Data sheet with an optional header row; returns
        its range as an absolute reference."""
        x = np.asarray(x, dtype=float)
        rows = [[None if np.isnan(v) else float(v) for v in row] for row in x]
        if names is not None:
            rows = [list(names)] + rows
        left = self.next_col
        with self.office.watchdog(120):
            fill(self.data, 0, left, rows)
        self.next_col += x.shape[1] + 1
        return f"$Data.${address(left, 0).rstrip('0123456789')}$1:${address(left + x.shape[1] - 1, 0).rstrip('0123456789')}${len(rows)}"

    def put_rows(self, rows):
        """Writes rows of mixed values (numbers, text, None) and returns the range."""
        left = self.next_col
        with self.office.watchdog(120):
            fill(self.data, 0, left, rows)
        ncols = max(len(r) for r in rows)
        self.next_col += ncols + 1
        return f"$Data.{address(left, 0)}:{address(left + ncols - 1, len(rows) - 1)}"

    def _area(self, rows, cols):
        top = self.next_row
        self.next_row += rows + 1
        return top

    def array(self, formula, rows, cols):
        """Enters `formula` as an array formula over rows x cols cells; returns the results (float,
        str, or ('error', code))."""
        top = self._area(rows, cols)
        rng = self.out.getCellRangeByPosition(0, top, cols - 1, top + rows - 1)
        with self.office.watchdog():
            rng.setArrayFormula(formula)
            return _read(self.out, top, rows, cols)

    def value(self, formula):
        top = self._area(1, 1)
        cell = self.out.getCellByPosition(0, top)
        with self.office.watchdog():
            cell.setFormula(formula)
            return _read(self.out, top, 1, 1)[0][0]

    def numbers(self, formula, rows, cols):
        res = self.array(formula, rows, cols)
        bad = [v for row in res for v in row if not isinstance(v, float)]
        assert not bad, f"{formula} gave non-numbers: {bad[:5]}"
        return np.array(res)

    def still_answers(self):
        assert self.office.alive(), "LibreOffice died"
        assert self.value("=1+1") == 2.0

    def close(self):
        with self.office.watchdog(60):
            self.doc.close(True)


def _read(sheet, top, rows, cols):
    out = []
    for i in range(rows):
        row = []
        for j in range(cols):
            cell = sheet.getCellByPosition(j, top + i)
            err = cell.getError()
            if err:
                row.append(("error", err))
            elif cell.FormulaResultType2 == 2:  # com.sun.star.sheet.FormulaResult.STRING
                row.append(cell.getString())
            else:
                row.append(cell.getValue())
        out.append(row)
    return out


@pytest.fixture(scope="session")
def lode_functions(office):
    """Every LODE.* function of Calc's Function Wizard: name -> [(argument, optional)]."""
    fd = office.smgr.createInstanceWithContext("com.sun.star.sheet.FunctionDescriptions", office.ctx)
    out = {}
    for i in range(fd.getCount()):
        props = {p.Name: p.Value for p in fd.getByIndex(i)}
        # LODE.REASON passes its arguments on to the function it names and answers every failure in
        # text: test_reason.py covers it, the grids of bad input cover the functions themselves
        if props["Name"].startswith("LODE.") and props["Name"] != "LODE.REASON":
            out[props["Name"]] = [(a.Name, a.IsOptional) for a in (props["Arguments"] or ())]
    assert len(out) >= 3
    return out


@pytest.fixture(scope="module")
def book(office):
    b = Book(office)
    yield b
    b.close()
