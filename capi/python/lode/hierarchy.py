"""The Schmid-Leiman transformation and omega hierarchical, re-exported by ``lode``."""

import ctypes
from ctypes import c_int, c_int64, c_size_t, c_void_p

import numpy as np

from . import _abi, _checks, _native
from ._native import check, lib
from . import _METHODS, Model, _choice, _lines


_native.declare({
    "lode_schmid_leiman_options_init": (c_int, [ctypes.POINTER(_abi.lode_schmid_leiman_options), c_size_t]),
    "lode_schmid_leiman_compute": (c_int, [c_void_p, ctypes.POINTER(_abi.lode_schmid_leiman_options), _native.P_int64, c_int64,
                                           _native.P_void_p]),
    "lode_schmid_leiman_matrix": (c_int, [c_void_p, c_int, _native.P_double, c_size_t, _native.P_int64,
                                          _native.P_int64]),
    "lode_schmid_leiman_value": (c_int, [c_void_p, c_int, _native.P_double]),
    "lode_schmid_leiman_text": (c_int, [c_void_p, c_int, ctypes.c_char_p, c_size_t, _native.P_size_t]),
    "lode_schmid_leiman_free": (None, [c_void_p]),
})


class SchmidLeiman(_native.Handle):
    """A general factor under the group factors of an oblique solution (Schmid & Leiman 1957).

    ``general`` (items: loadings on the general factor), ``group`` (items x factors),
    ``uniquenesses``, ``second_order_loadings`` (each factor's loading on the general factor),
    ``omega_total``, ``omega_hierarchical`` (the general factor's share of the variance of the sum of
    all items), ``omega_subscales`` (per factor: its group factor's share of the sum of its items,
    NaN without items), ``subscale_omega_total``, ``ecv`` (explained common variance of the general
    factor), ``assignment`` (each item's subscale), ``second_order_max_residual``,
    ``second_order_converged``, ``notes``. A high omega hierarchical says a total score mostly
    measures one thing; a low one says the subscales carry information of their own (common
    practice reads omega hierarchical of about 0.7 or more as a total score worth reporting and
    ECV of about 0.7 or more as essentially one dimension; neither is a sharp rule)."""

    _free = "lode_schmid_leiman_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_schmid_leiman", pointer)
        col = lambda key: mat(key)[:, 0]  # noqa: E731
        self.general = col(_abi.LODE_SCHMID_LEIMAN_GENERAL)
        self.group = mat(_abi.LODE_SCHMID_LEIMAN_GROUP)
        self.uniquenesses = col(_abi.LODE_SCHMID_LEIMAN_UNIQUENESSES)
        self.second_order_loadings = col(_abi.LODE_SCHMID_LEIMAN_SECOND_ORDER_LOADINGS)
        self.omega_subscales = col(_abi.LODE_SCHMID_LEIMAN_OMEGA_SUBSCALES)
        self.subscale_omega_total = col(_abi.LODE_SCHMID_LEIMAN_SUBSCALE_OMEGA_TOTAL)
        self.assignment = col(_abi.LODE_SCHMID_LEIMAN_ASSIGNMENT).astype(np.int64)
        self.omega_total = num(_abi.LODE_SCHMID_LEIMAN_OMEGA_TOTAL)
        self.omega_hierarchical = num(_abi.LODE_SCHMID_LEIMAN_OMEGA_HIERARCHICAL)
        self.ecv = num(_abi.LODE_SCHMID_LEIMAN_ECV)
        self.second_order_max_residual = num(_abi.LODE_SCHMID_LEIMAN_SECOND_ORDER_MAX_RESIDUAL)
        self.second_order_converged = bool(num(_abi.LODE_SCHMID_LEIMAN_SECOND_ORDER_CONVERGED))
        self.notes = _lines(_native.get_text(lib.lode_schmid_leiman_text, pointer, _abi.LODE_SCHMID_LEIMAN_NOTES))

    def __repr__(self):
        return f"<lode.SchmidLeiman omega_h={self.omega_hierarchical:.3f} omega_t={self.omega_total:.3f}>"


def schmid_leiman(model, *, assignment=None, second_order="minres", max_iterations=1000, tolerance=1e-10):
    """The Schmid-Leiman transformation of ``model`` (a :class:`Model` from :func:`fit` with an
    oblique rotation and at least three factors): a one-factor fit of its factor correlations
    (``second_order`` "minres", "ml" or "paf", with ``max_iterations`` and ``tolerance``) puts a
    general factor under the group factors; the omegas (McDonald 1999; Zinbarg et al. 2005) follow.
    ``assignment`` (each item's 0-based factor, -1 = none) sets the subscales; None puts each item
    in the subscale of its largest absolute pattern loading. Returns :class:`SchmidLeiman`."""
    _checks.instance(model, Model, "model", "a fitted model (lode.fit)")
    o = _native.options("lode_schmid_leiman_options",
                        second_order=_choice(second_order, _METHODS, "second-order extraction method"),
                        max_iterations=max_iterations, tolerance=tolerance)
    ptr = ctypes.c_void_p()
    if assignment is None:
        check(lib.lode_schmid_leiman_compute(model.pointer, ctypes.byref(o), None, 0, ctypes.byref(ptr)))
    else:
        a = np.array([_checks.whole(x, "assignment") for x in np.ravel(_checks.matrix(assignment, "assignment"))],
                     dtype=np.int64)
        check(lib.lode_schmid_leiman_compute(model.pointer, ctypes.byref(o), a.ctypes.data_as(_native.P_int64), a.size,
                                             ctypes.byref(ptr)))
    return SchmidLeiman(ptr.value)
