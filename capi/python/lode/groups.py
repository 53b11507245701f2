"""Does the factor structure hold in every group? ``compare_groups``, re-exported by ``lode``."""

import ctypes
import re
from ctypes import c_int, c_int64, c_size_t, c_void_p

import numpy as np

from . import _abi, _checks, _native
from ._checks import ArgumentError
from ._native import check, lib
from . import _KINDS, _METHODS, _MISSING, _choice, _lines, _make_data, _rotation_method


_native.declare({
    "lode_group_comparison_options_init": (c_int, [ctypes.POINTER(_abi.lode_group_comparison_options), c_size_t]),
    "lode_group_comparison_compute": (c_int, [c_void_p, _native.P_int64, c_int64,
                                              ctypes.POINTER(_abi.lode_group_comparison_options), _native.P_void_p]),
    "lode_group_comparison_matrix": (c_int, [c_void_p, c_int, _native.P_double, c_size_t, _native.P_int64,
                                             _native.P_int64]),
    "lode_group_comparison_value": (c_int, [c_void_p, c_int, _native.P_double]),
    "lode_group_comparison_text": (c_int, [c_void_p, c_int, ctypes.c_char_p, c_size_t, _native.P_size_t]),
    "lode_group_comparison_free": (None, [c_void_p]),
})


class GroupComparison(_native.Handle):
    """Each group's analysis next to the pooled one.

    ``groups`` (the labels of the groups analysed, in sorted order), ``rows`` (respondents per group),
    ``congruence`` (groups x factors: Tucker's congruence with the pooled factor; 0.95 and above the
    same factor, 0.85 to 0.95 fair similarity, below that it differs, Lorenzo-Seva & ten Berge 2006),
    ``alpha`` and ``omega`` (groups x factors, per scale), ``patterns`` (one items x factors matrix
    per group, rotated towards the pooled pattern), ``pooled_pattern``, ``pooled_factor_correlations``,
    ``assignment`` (each item's scale), ``oblique`` (the Procrustes kind), ``skipped`` (a list of
    (label, respondents, reason)), ``item_differences`` (a list of dicts: ``group``, ``item``,
    ``factor``, ``group_loading``, ``pooled_loading``, ``text``), ``notes`` (readings and the
    caution: congruence is descriptive, not a formal test of measurement invariance)."""

    _free = "lode_group_comparison_free"

    def __init__(self, pointer, labels, numeric=True):
        super().__init__(pointer)
        _lines_of = (lambda text: _lines(text)) if numeric else (  # noqa: E731
            lambda text: _lines(re.sub(r"\bgroup (-?\d+)", lambda m: f"group '{labels[int(m.group(1))]}'", text)))
        mat, num, txt = _native.readers("lode_group_comparison", pointer)
        label = lambda code: labels[int(code)]  # noqa: E731
        self.groups = [label(c) for c in mat(_abi.LODE_GROUP_COMPARISON_CODES)[:, 0]]
        self.rows = mat(_abi.LODE_GROUP_COMPARISON_ROWS)[:, 0].astype(np.int64)
        self.congruence = mat(_abi.LODE_GROUP_COMPARISON_CONGRUENCE)
        self.alpha = mat(_abi.LODE_GROUP_COMPARISON_ALPHA)
        self.omega = mat(_abi.LODE_GROUP_COMPARISON_OMEGA)
        self.pooled_pattern = mat(_abi.LODE_GROUP_COMPARISON_POOLED_PATTERN)
        self.pooled_factor_correlations = mat(_abi.LODE_GROUP_COMPARISON_POOLED_FACTOR_CORRELATIONS)
        self.assignment = mat(_abi.LODE_GROUP_COMPARISON_ASSIGNMENT)[:, 0].astype(np.int64)
        items = self.pooled_pattern.shape[0]
        stacked = mat(_abi.LODE_GROUP_COMPARISON_PATTERNS)
        self.patterns = [stacked[g * items:(g + 1) * items] for g in range(len(self.groups))]
        self.oblique = bool(num(_abi.LODE_GROUP_COMPARISON_OBLIQUE))
        self.pooled_n_obs = int(num(_abi.LODE_GROUP_COMPARISON_POOLED_N_OBS))
        reasons = _lines_of(txt(_abi.LODE_GROUP_COMPARISON_SKIPPED_REASONS))
        self.skipped = [(label(c), int(n), r) for (c, n), r in zip(mat(_abi.LODE_GROUP_COMPARISON_SKIPPED), reasons)]
        texts = _lines_of(txt(_abi.LODE_GROUP_COMPARISON_DIFFERENCE_TEXTS))
        self.item_differences = [
            {"group": label(d[0]), "item": int(d[1]), "factor": int(d[2]), "group_loading": d[3],
             "pooled_loading": d[4], "text": text} for d, text in zip(mat(_abi.LODE_GROUP_COMPARISON_DIFFERENCES), texts)]
        self.notes = _lines_of(txt(_abi.LODE_GROUP_COMPARISON_NOTES))

    def __repr__(self):
        return f"<lode.GroupComparison {len(self.groups)} groups, {len(self.skipped)} skipped>"


def compare_groups(X, groups, *, factors=None, method="ml", rotation="oblimin", min_group=100, threshold=0.2,
                   correlation="pearson", missing="pairwise", item_names=None, threads=0, progress=None):
    """The factor analysis of all rows of ``X`` together and of each group (``groups``: one label per
    row, numbers or text) with at least ``min_group`` respondents (and more than the number of items;
    100 is common practice, smaller groups are listed in ``skipped``): ``factors`` factors (None: the
    count the pooled data suggest) by ``method`` ("ml", "paf", "minres"), the pooled solution rotated
    by ``rotation`` and each group's turned towards it by Procrustes (oblique when the rotation is).
    Loadings differing from the pooled ones by more than ``threshold`` are listed. Labels in the
    result are those given. Returns :class:`GroupComparison`."""
    labels, codes = np.unique(np.asarray(groups).astype(str) if _mixed(groups) else np.asarray(groups),
                              return_inverse=True)
    labels = [x.item() if hasattr(x, "item") else x for x in labels]
    numeric = all(isinstance(x, (int, np.integer)) for x in labels)
    # Whole-number labels go to the library as they are (its messages then name them); others as
    # their position in sorted order, put back into the texts here.
    codes = np.ascontiguousarray(np.asarray(labels, dtype=np.int64)[codes.ravel()] if numeric else codes.ravel(),
                                 dtype=np.int64)
    label_of = {int(x): x for x in labels} if numeric else dict(enumerate(labels))
    data = _make_data(X, item_names=item_names)
    if factors is None:
        from . import fit  # the pooled data's suggested count, as fit() chooses it

        factors = fit(X, method=method, missing=missing, correlation=correlation,
                      item_names=item_names).loadings.shape[1]
    co = _native.options("lode_correlation_options",
                         kind=_choice(correlation, _KINDS, "correlation method"),
                         missing=_choice(missing, _MISSING, "missing-value policy"))
    o = _native.options("lode_group_comparison_options",
                        factors=_checks.whole(factors, "factors"), method=_choice(method, _METHODS, "extraction method"),
                        rotation=_rotation_method(rotation), min_group=_checks.whole(min_group, "min_group"),
                        difference_threshold=threshold, threads=threads)
    o.correlation = ctypes.pointer(co)
    callback = _native.attach_progress(o, progress)
    if codes.size != _native.as_strided_matrix(X, "X")[1]:
        raise ArgumentError(f"{codes.size} group labels were given for {_native.as_strided_matrix(X, 'X')[1]} rows; "
                            "give one per row")
    ptr = ctypes.c_void_p()
    check(lib.lode_group_comparison_compute(data.pointer, codes.ctypes.data_as(_native.P_int64), codes.size,
                                            ctypes.byref(o), ctypes.byref(ptr)))
    del callback
    return GroupComparison(ptr.value, label_of, numeric)


def _mixed(groups):
    """True when the labels are not all numbers (then they are compared as text)."""
    a = np.asarray(groups)
    return a.dtype.kind not in "iufb"
