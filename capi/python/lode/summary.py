"""Mergeable summaries of survey answers (liblode's lode_summary) and the ``summary=`` keyword.

A :class:`Summary` holds per item and per pair of items the rows answering both, the means, sums of
squares and co-moments over those rows, and for items with few distinct values their category
counts and pair tables: everything Pearson, Spearman and polychoric correlations need, nothing per
respondent. Summaries of parts of the data merge into the summary of the whole.
"""

import ctypes
import functools

import numpy as np

from . import _abi
from . import _native
from ._native import c_int, c_int64, c_size_t, c_void_p, P_double, P_int64, P_size_t, P_void_p, check, lib

P_uint8 = ctypes.POINTER(ctypes.c_uint8)



_native.declare({
    "lode_summary_options_init": (c_int, [ctypes.POINTER(_abi.lode_summary_options), c_size_t]),
    "lode_summary_create": (c_int, [c_int64, ctypes.POINTER(ctypes.c_char_p), ctypes.POINTER(_abi.lode_summary_options),
                                    P_void_p]),
    "lode_summary_add": (c_int, [c_void_p, P_double, c_int64, c_int64, c_int64, c_int64]),
    "lode_summary_merge": (c_int, [c_void_p, c_void_p]),
    "lode_summary_to_bytes": (c_int, [c_void_p, P_uint8, c_size_t, P_size_t]),
    "lode_summary_from_bytes": (c_int, [P_uint8, c_size_t, P_void_p]),
    "lode_summary_to_data": (c_int, [c_void_p, P_void_p]),
    "lode_summary_free": (None, [c_void_p]),
    "lode_summary_matrix": (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64]),
    "lode_summary_value": (c_int, [c_void_p, c_int, P_double]),
    "lode_summary_table": (c_int, [c_void_p, c_int64, c_int64, P_double, c_size_t, P_int64, P_int64]),
    "lode_summary_item_name": (c_int, [c_void_p, c_int64, ctypes.c_char_p, c_size_t, P_size_t]),
})

_MATRICES = {"pair_counts": _abi.LODE_SUMMARY_PAIR_COUNTS, "means": _abi.LODE_SUMMARY_MEANS,
             "sums_of_squares": _abi.LODE_SUMMARY_SUMS_OF_SQUARES, "comoments": _abi.LODE_SUMMARY_COMOMENTS,
             "categories": _abi.LODE_SUMMARY_CATEGORIES,
             "category_counts": _abi.LODE_SUMMARY_CATEGORY_COUNTS}
_VALUES = {"n_rows": _abi.LODE_SUMMARY_N_ROWS, "rows_complete": _abi.LODE_SUMMARY_ROWS_COMPLETE,
           "rows_answered": _abi.LODE_SUMMARY_ROWS_ANSWERED, "missing_cells": _abi.LODE_SUMMARY_MISSING_CELLS,
           "n_items": _abi.LODE_SUMMARY_ITEMS,
           "max_categories": _abi.LODE_SUMMARY_MAX_CATEGORIES, "listwise": _abi.LODE_SUMMARY_LISTWISE,
           "format_version": _abi.LODE_SUMMARY_FORMAT_VERSION}


class _Handle(_native.Handle):
    _free = "lode_summary_free"


class Summary:
    """A mergeable summary of answers (rows are respondents, columns items, NaN = skipped).

    ``items``: the item names (must match for a merge), their number, or None to take them from
    the first block added (a data frame's columns, else unnamed). ``max_categories``: items with at
    most this many distinct values keep category counts and pair tables (Spearman, polychoric);
    others keep moments only (Pearson). ``listwise``: only rows with every item answered count.

    ``add(rows)`` and ``merge(other)`` change the summary in place and return it; ``to_bytes()`` and
    ``Summary.from_bytes(b)`` give and read the portable form. Pass it as ``summary=`` to
    :func:`lode.correlation`, :func:`lode.fit` and the other functions that take data.
    """

    def __init__(self, items=None, max_categories=11, listwise=False):
        self._handle = None
        self._max_categories = int(max_categories)
        self._listwise = bool(listwise)
        if items is not None:
            self._create(list(range(int(items))) if np.isscalar(items) else list(items), named=not np.isscalar(items))

    def _create(self, items, named=True):
        o = _native.options("lode_summary_options", max_categories=self._max_categories,
                            listwise=1 if self._listwise else 0)
        names = None
        if named:
            names = (ctypes.c_char_p * len(items))(*[None if s is None else str(s).encode() for s in items])
        ptr = c_void_p()
        check(lib.lode_summary_create(len(items), names, ctypes.byref(o), ctypes.byref(ptr)))
        self._handle = _Handle(ptr.value)

    @property
    def _ptr(self):
        if self._handle is None:
            raise ValueError("this summary has no items yet: add rows first (or give items=)")
        return self._handle.pointer

    def add(self, rows):
        """Adds a block of rows (a 2-D array or data frame; NaN = skipped). Returns the summary."""
        if self._handle is None:
            cols = np.shape(rows)[1] if np.ndim(rows) == 2 else 0
            names = [str(c) for c in rows.columns] if hasattr(rows, "columns") else [None] * cols
            self._create(names, named=hasattr(rows, "columns"))
        a, n, p, rs, cs = _native.as_strided_matrix(rows, "rows")
        check(lib.lode_summary_add(self._ptr, _native.data_pointer(a), n, p, rs, cs))
        return self

    def merge(self, other):
        """Adds ``other`` (a Summary of the same items and settings) into this one. Returns it."""
        if not isinstance(other, Summary):
            raise TypeError(f"merge takes a lode.Summary, not {type(other).__name__}")
        if other._handle is None:
            return self
        if self._handle is None:
            self._max_categories, self._listwise = other.max_categories, other.listwise
            self._create(other.items, named=True)
        check(lib.lode_summary_merge(self._ptr, other._ptr))
        return self

    def to_bytes(self):
        """The portable byte form (README, "Summaries")."""
        n = c_size_t()
        check(lib.lode_summary_to_bytes(self._ptr, None, 0, ctypes.byref(n)))
        buf = (ctypes.c_uint8 * n.value)()
        check(lib.lode_summary_to_bytes(self._ptr, buf, n.value, None))
        return bytes(buf)

    @classmethod
    def from_bytes(cls, data):
        """Reads the byte form; a truncated or damaged form raises :class:`LodeError`."""
        b = bytes(data)
        buf = (ctypes.c_uint8 * max(len(b), 1)).from_buffer_copy(b or b"\0")
        ptr = c_void_p()
        check(lib.lode_summary_from_bytes(buf, len(b), ctypes.byref(ptr)))
        s = cls.__new__(cls)
        s._handle = _Handle(ptr.value)
        s._max_categories = int(_native.get_value(lib.lode_summary_value, s._ptr, _VALUES["max_categories"]))
        s._listwise = bool(_native.get_value(lib.lode_summary_value, s._ptr, _VALUES["listwise"]))
        return s

    def __reduce__(self):  # pickling (e.g. between Dask workers) goes through the byte form
        return (_from_state, (self.to_bytes() if self._handle is not None else None, self._max_categories,
                              self._listwise))

    def _value(self, name):
        return _native.get_value(lib.lode_summary_value, self._ptr, _VALUES[name])

    @property
    def n_rows(self):
        """Rows added (all of them, also for a listwise summary)."""
        return 0 if self._handle is None else int(self._value("n_rows"))

    @property
    def rows_complete(self):
        return int(self._value("rows_complete"))

    @property
    def max_categories(self):
        return self._max_categories

    @property
    def listwise(self):
        return self._listwise

    @property
    def items(self):
        """The item names ("" for unnamed items)."""
        p = int(self._value("n_items"))
        out = []
        for j in range(p):
            n = c_size_t()
            check(lib.lode_summary_item_name(self._ptr, j, None, 0, ctypes.byref(n)))
            buf = ctypes.create_string_buffer(n.value + 1)
            check(lib.lode_summary_item_name(self._ptr, j, buf, n.value + 1, None))
            out.append(buf.value.decode("utf-8", "replace"))
        return out

    def matrix(self, name):
        """One of "pair_counts", "means", "sums_of_squares", "comoments", "categories",
        "category_counts" (see lode.h, LODE_SUMMARY_*)."""
        return _native.get_matrix(lib.lode_summary_matrix, self._ptr, _MATRICES[name])

    @property
    def pair_counts(self):
        return self.matrix("pair_counts").astype(np.int64)

    def table(self, a, b):
        """The contingency table of items a and b (0-based): rows a's categories, columns b's."""
        rows, cols = c_int64(), c_int64()
        check(lib.lode_summary_table(self._ptr, int(a), int(b), None, 0, ctypes.byref(rows), ctypes.byref(cols)))
        out = np.empty((rows.value, cols.value))
        check(lib.lode_summary_table(self._ptr, int(a), int(b), _native.data_pointer(out), out.size, None, None))
        return out

    def _data(self):
        """A lode_data handle for the correlation functions."""
        from . import _Data
        ptr = c_void_p()
        check(lib.lode_summary_to_data(self._ptr, ctypes.byref(ptr)))
        return _Data(ptr.value)

    def __repr__(self):
        if self._handle is None:
            return "<lode.Summary (no rows yet)>"
        return f"<lode.Summary {int(self._value('n_items'))} items, {self.n_rows} rows>"


def _from_state(data, max_categories, listwise):
    if data is None:
        return Summary(None, max_categories, listwise)
    return Summary.from_bytes(data)


def accepts_summary(fn=None, *, needs_rows=None):
    """Gives a function that takes data (``X`` or ``corr=``) the keyword ``summary=``: the summary
    goes in as ``X``. With ``needs_rows`` ("scores", ...) a summary is refused with a message saying
    that the computation needs the respondents' rows."""
    if fn is None:
        return functools.partial(accepts_summary, needs_rows=needs_rows)

    @functools.wraps(fn)
    def wrapper(*args, summary=None, **kwargs):
        given = summary if summary is not None else next((a for a in args[:1] if isinstance(a, Summary)), None)
        if given is None:
            given = kwargs.get("X") if isinstance(kwargs.get("X"), Summary) else None
        if given is not None and needs_rows:
            raise ValueError(f"{needs_rows} need the respondents' rows; a summary holds only counts, moments and "
                             "tables: pass the rows themselves")
        if summary is None:
            return fn(*args, **kwargs)
        if (args and args[0] is not None) or any(kwargs.get(k) is not None for k in ("X", "corr", "cov")):
            raise ValueError("give either the data (X, corr or cov) or summary=, not both")
        return fn(*args[1:], X=summary, **kwargs)

    return wrapper
