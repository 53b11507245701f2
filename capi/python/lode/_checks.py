"""Argument checks of the Python binding.

Every value a caller passes is converted here before it crosses into liblode, and a value that does
not fit is refused by the argument's name with :class:`ArgumentError` (a :class:`LodeError`, so one
``except lode.LodeError`` catches every refusal; it is also a ValueError and a TypeError, as Python
code expects of a bad argument). Nothing is wrapped or truncated: ctypes would silently keep the low
bits of an integer too wide for its C field (2**32 + 2 factors would become 2), so integers are
range-checked against the C type they land in; whole-number floats (1e9) are accepted as integers.
"""

import ctypes
import operator

import numpy as np

from ._native import LodeError

_INVALID_ARGUMENT = 1  # LODE_E_INVALID_ARGUMENT


class ArgumentError(LodeError, ValueError, TypeError):
    """A bad argument, refused by the binding before the library is called."""

    def __init__(self, message):
        super().__init__(_INVALID_ARGUMENT, "invalid argument", message)


def _bounds(ctype):
    bits = 8 * ctypes.sizeof(ctype)
    if ctype in (ctypes.c_uint64, ctypes.c_size_t, ctypes.c_uint32, ctypes.c_uint):
        return 0, 2 ** bits - 1
    return -(2 ** (bits - 1)), 2 ** (bits - 1) - 1


def whole(value, name, low=-(2 ** 63), high=2 ** 63 - 1):
    """``value`` as a Python int within [low, high], or ArgumentError naming ``name``."""
    if value is None or isinstance(value, (bool, np.bool_, str, bytes)):
        raise ArgumentError(f"{name} must be a whole number; got {value!r}")
    try:
        v = operator.index(value)
    except TypeError:
        try:
            f = float(value)
        except (TypeError, ValueError, OverflowError):
            raise ArgumentError(f"{name} must be a whole number; got {value!r}") from None
        if not (np.isfinite(f) and f == int(f)):
            raise ArgumentError(f"{name} must be a whole number; got {value!r}") from None
        v = int(f)
    if not low <= v <= high:
        raise ArgumentError(f"{name} must be between {low} and {high}; got {v}")
    return v


def real(value, name):
    """``value`` as a float, or ArgumentError naming ``name`` (NaN and infinities pass: the library
    judges them with its own message)."""
    if value is None or isinstance(value, (bool, np.bool_, str, bytes)):
        raise ArgumentError(f"{name} must be a number; got {value!r}")
    try:
        return float(value)
    except (TypeError, ValueError, OverflowError):
        raise ArgumentError(f"{name} must be a number; got {value!r}") from None


def put(struct, field, value, name=None):
    """Sets ``struct.field`` to ``value`` checked against the field's C type; ``name`` is the
    argument's name in messages (default: the field's)."""
    ctype = dict(struct._fields_)[field]
    name = name or field
    if ctype is ctypes.c_double:
        value = real(value, name)
    elif ctype in (ctypes.c_int, ctypes.c_int64, ctypes.c_uint64, ctypes.c_size_t):
        value = whole(value, name, *_bounds(ctype))
    setattr(struct, field, value)


def matrix(x, name):
    """``x`` as a numpy array of float64, or ArgumentError: a matrix is a 2-D array of numbers (a
    numpy array, a list of rows, a data frame), not a dict, a word or None."""
    if x is None or isinstance(x, (dict, str, bytes, set)):
        raise ArgumentError(f"{name} must be a 2-D array of numbers (rows x columns); got {type(x).__name__}")
    try:
        return np.asarray(x, dtype=np.float64)
    except (TypeError, ValueError) as e:
        raise ArgumentError(f"{name} must be a 2-D array of numbers (rows x columns): {e}") from None


def instance(value, cls, name, what):
    """``value`` when it is a ``cls``, else ArgumentError naming ``name`` and what it should be."""
    if not isinstance(value, cls):
        raise ArgumentError(f"{name} must be {what}; got {type(value).__name__}")
    return value


def choice(value, table, what):
    """The code of the option word ``value`` in ``table``; surrounding white space and case do
    not matter ("  Pearson " is "pearson"), as in the C library's name lookups."""
    key = value.strip().lower() if isinstance(value, str) else value
    try:
        return table[key]
    except (KeyError, TypeError):
        raise ArgumentError(f"unknown {what} {value!r}; choose one of {', '.join(map(repr, table))}") from None
