"""Loading liblode and declaring its C functions for ctypes (internal to the lode package)."""

import ctypes
import ctypes.util
import os
import sys

import numpy as np

ABI_MAJOR = 1

c_int = ctypes.c_int
c_int64 = ctypes.c_int64
c_size_t = ctypes.c_size_t
c_double = ctypes.c_double
c_char_p = ctypes.c_char_p
c_void_p = ctypes.c_void_p
P_double = ctypes.POINTER(c_double)
P_int64 = ctypes.POINTER(c_int64)
P_size_t = ctypes.POINTER(c_size_t)
P_void_p = ctypes.POINTER(c_void_p)

PROGRESS_FN = ctypes.CFUNCTYPE(c_int, c_void_p, c_int64, c_int64)


class LodeError(Exception):
    """An error reported by liblode: `status` is the C status code, `status_name` its name and
    `message` the library's explanation (which item, which value, how many rows survive)."""

    def __init__(self, status, status_name, message):
        super().__init__(f"{message} [{status_name}]" if message else status_name)
        self.status = status
        self.status_name = status_name
        self.message = message


class VersionInfo(ctypes.Structure):
    _fields_ = [("major", c_int), ("minor", c_int), ("patch", c_int), ("abi_major", c_int),
                ("abi_minor", c_int), ("string", c_char_p)]


class CorrelationOptions(ctypes.Structure):
    _fields_ = [("struct_size", c_size_t), ("kind", c_int), ("missing", c_int), ("smooth", c_int),
                ("min_eigenvalue", c_double), ("min_pair_observations", c_int64), ("threads", c_int),
                ("max_categories", c_int), ("zero_cells", c_int), ("zero_cell_add", c_double),
                ("progress", PROGRESS_FN), ("progress_user", c_void_p)]


def _candidates(here=None, platform=None):
    """Where liblode is looked for, in order: LODE_LIBRARY; beside the package (the wheel); the
    library folder of an installed prefix (the package sits in <libdir>/lode/python/lode); on
    Windows also <prefix>/bin (the zip's layout); then the platform's own search (on Windows
    ctypes.util.find_library looks through PATH for lode.dll)."""
    env = os.environ.get("LODE_LIBRARY")
    if env:
        yield env
        return
    here = here or os.path.dirname(os.path.abspath(__file__))
    windows = (platform or sys.platform) == "win32"
    names = ("lode.dll",) if windows else ("liblode.so.1", "liblode.so", "liblode.dylib")
    libdir = os.path.normpath(os.path.join(here, "..", "..", ".."))
    folders = [here, os.path.dirname(here), libdir]
    if windows:
        folders.append(os.path.join(os.path.dirname(libdir), "bin"))
    for folder in folders:
        for name in names:
            path = os.path.join(folder, name)
            if os.path.exists(path):
                yield path
    found = ctypes.util.find_library("lode")
    yield found or names[0]


def _load():
    errors = []
    for path in _candidates():
        try:
            return ctypes.CDLL(path)
        except OSError as e:
            errors.append(f"{path}: {e}")
    raise ImportError("liblode could not be loaded (set LODE_LIBRARY to its path): " + "; ".join(errors))


lib = _load()

# name: (restype, argtypes)
_SIGNATURES = {
    "lode_version": (ctypes.POINTER(VersionInfo), []),
    "lode_status_name": (c_char_p, [c_int]),
    "lode_error_message": (c_char_p, []),
    "lode_data_from_raw": (c_int, [P_double, c_int64, c_int64, c_int64, c_int64, P_void_p]),
    "lode_data_from_correlation": (c_int, [P_double, c_int64, c_int64, c_int64, c_int64, P_void_p]),
    "lode_data_from_covariance": (c_int, [P_double, c_int64, c_int64, c_int64, c_int64, P_void_p]),
    "lode_data_set_item_names": (c_int, [c_void_p, ctypes.POINTER(c_char_p), c_int64]),
    "lode_data_shape": (c_int, [c_void_p, P_int64, P_int64]),
    "lode_data_free": (None, [c_void_p]),
    "lode_correlation_options_init": (c_int, [ctypes.POINTER(CorrelationOptions), c_size_t]),
    "lode_correlation_compute": (c_int, [c_void_p, ctypes.POINTER(CorrelationOptions), P_void_p]),
    "lode_correlation_free": (None, [c_void_p]),
    "lode_correlation_matrix": (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64]),
    "lode_correlation_value": (c_int, [c_void_p, c_int, P_double]),
    "lode_correlation_text": (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t]),
}


def declare(signatures):
    """Declares result and argument types of C functions (absent ones raise when called)."""
    for name, (restype, argtypes) in signatures.items():
        fn = getattr(lib, name)
        fn.restype = restype
        fn.argtypes = argtypes


declare(_SIGNATURES)

_info = lib.lode_version().contents
if _info.abi_major != ABI_MAJOR:
    raise ImportError(f"liblode has ABI {_info.abi_major}.{_info.abi_minor}; this binding needs ABI {ABI_MAJOR}.x")


_factorability_signatures = {
    "lode_factorability_compute": (c_int, [c_void_p, P_void_p]),
    "lode_factorability_matrix": (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64]),
    "lode_factorability_value": (c_int, [c_void_p, c_int, P_double]),
    "lode_factorability_text": (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t]),
    "lode_factorability_free": (None, [c_void_p]),
}
declare(_factorability_signatures)


class FactorCountOptions(ctypes.Structure):
    _fields_ = [("struct_size", c_size_t), ("replicates", c_int64), ("threshold", c_int), ("percentile", c_double),
                ("source", c_int), ("seed", ctypes.c_uint64), ("threads", c_int), ("progress", PROGRESS_FN),
                ("progress_user", c_void_p)]


_count_signatures = {
    "lode_factor_count_options_init": (c_int, [ctypes.POINTER(FactorCountOptions), c_size_t]),
    "lode_factor_count_compute": (c_int, [c_void_p, ctypes.POINTER(FactorCountOptions), P_void_p]),
    "lode_factor_count_matrix": (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64]),
    "lode_factor_count_value": (c_int, [c_void_p, c_int, P_double]),
    "lode_factor_count_text": (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t]),
    "lode_factor_count_free": (None, [c_void_p]),
}
declare(_count_signatures)


class RotationOptions(ctypes.Structure):
    _fields_ = [("struct_size", c_size_t), ("method", c_int), ("normalize", c_int), ("gamma", c_double),
                ("kappa", c_double), ("epsilon", c_double), ("power", c_double), ("target", P_double),
                ("target_rows", c_int64), ("target_cols", c_int64), ("target_row_stride", c_int64),
                ("target_col_stride", c_int64), ("random_starts", c_int), ("seed", ctypes.c_uint64),
                ("max_iterations", c_int), ("tolerance", c_double), ("threads", c_int)]


class FitOptions(ctypes.Structure):
    _fields_ = [("struct_size", c_size_t), ("factors", c_int), ("method", c_int), ("max_iterations", c_int),
                ("tolerance", c_double), ("min_uniqueness", c_double), ("interval_level", c_double),
                ("rotation", ctypes.POINTER(RotationOptions)), ("factor_count", ctypes.POINTER(FactorCountOptions)),
                # ABI 1.2
                ("progress", PROGRESS_FN), ("progress_user", c_void_p)]


# The size of lode_model_options before ABI 1.2 (without the progress fields): what is passed to an
# older library, which would refuse the larger struct only if its new fields were set.
FIT_OPTIONS_SIZE_1_1 = FitOptions.progress.offset


_getters = {}
for _kind in ("rotation", "model"):
    _getters[f"lode_{_kind}_matrix"] = (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64])
    _getters[f"lode_{_kind}_value"] = (c_int, [c_void_p, c_int, P_double])
    _getters[f"lode_{_kind}_text"] = (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t])
    _getters[f"lode_{_kind}_free"] = (None, [c_void_p])
_getters.update({
    "lode_rotation_method_from_name": (c_int, [c_char_p, ctypes.POINTER(c_int)]),
    "lode_rotation_method_name": (c_char_p, [c_int]),
    "lode_rotation_options_init": (c_int, [ctypes.POINTER(RotationOptions), c_size_t]),
    "lode_rotation_compute": (c_int, [P_double, c_int64, c_int64, c_int64, c_int64, ctypes.POINTER(RotationOptions), P_void_p]),
    "lode_model_options_init": (c_int, [ctypes.POINTER(FitOptions), c_size_t]),
    "lode_model_compute": (c_int, [c_void_p, ctypes.POINTER(FitOptions), P_void_p]),
})
declare(_getters)



class ScoreOptions(ctypes.Structure):
    _fields_ = [("struct_size", c_size_t), ("method", c_int), ("missing", c_int), ("min_answered_share", c_double),
                ("low_determinacy", c_double)]


_more = {}
for _kind in ("scores", "reliability"):
    _more[f"lode_{_kind}_matrix"] = (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64])
    _more[f"lode_{_kind}_value"] = (c_int, [c_void_p, c_int, P_double])
    _more[f"lode_{_kind}_text"] = (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t])
    _more[f"lode_{_kind}_free"] = (None, [c_void_p])
_more.update({
    "lode_scores_options_init": (c_int, [ctypes.POINTER(ScoreOptions), c_size_t]),
    "lode_scores_compute": (c_int, [c_void_p, c_void_p, ctypes.POINTER(ScoreOptions), P_void_p]),
    "lode_reliability_compute_alpha": (c_int, [c_void_p, P_void_p]),
    "lode_reliability_compute_omega": (c_int, [c_void_p, P_int64, c_int64, P_void_p]),
    "lode_reliability_compute_scale_omega": (c_int, [c_void_p, ctypes.POINTER(FitOptions), P_void_p]),
    "lode_comparison_compute": (c_int, [P_double, P_double, c_int64, c_int64, c_int64, c_int64, c_int64, c_int64,
                                      P_void_p]),
    "lode_comparison_matrix": (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64]),
    "lode_comparison_text": (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t]),
    "lode_comparison_free": (None, [c_void_p]),
})
# Added in ABI 1.1: declared only where the loaded library has them, so older libraries still load
# (the functions that need them then raise AttributeError).
declare({name: sig for name, sig in _more.items() if hasattr(lib, name)})


def check(status):
    """Raises LodeError for a failing status, with the library's message."""
    if status != 0:
        name = lib.lode_status_name(status).decode()
        message = lib.lode_error_message().decode("utf-8", "replace")
        raise LodeError(status, name, message)


def options(struct_type, init_name, **fields):
    """An option struct filled with the library's defaults, then the given fields."""
    o = struct_type()
    check(getattr(lib, init_name)(ctypes.byref(o), ctypes.sizeof(o)))
    from . import _checks  # (imports this module)

    for key, value in fields.items():
        _checks.put(o, key, value)
    return o


def as_strided_matrix(x, what):
    """A 2-D float64 numpy array and its (rows, cols, row_stride, col_stride) in elements, reusing
    the caller's memory when its layout allows (no copy for C or Fortran order)."""
    from . import _checks  # (imports this module)

    a = _checks.matrix(x, what)
    if a.ndim != 2:
        raise _checks.ArgumentError(f"{what} must be a 2-D array (rows x columns); it has {a.ndim} dimension(s)")
    item = a.itemsize
    if a.size == 0 or any(s <= 0 or s % item for s in a.strides):
        a = np.ascontiguousarray(a)
        rs, cs = a.shape[1], 1
    else:
        rs, cs = a.strides[0] // item, a.strides[1] // item
    return a, a.shape[0], a.shape[1], max(rs, 1), max(cs, 1)


def data_pointer(a):
    return a.ctypes.data_as(P_double)


class Handle:
    """Owns one liblode handle and frees it with its `_free` function."""

    _free = None

    def __init__(self, pointer):
        self._ptr = pointer

    @property
    def pointer(self):
        return self._ptr

    def __del__(self):
        ptr, self._ptr = getattr(self, "_ptr", None), None
        if ptr and self._free is not None:
            getattr(lib, self._free)(ptr)


def get_matrix(fn, handle, key):
    rows, cols = c_int64(), c_int64()
    check(fn(handle, key, None, 0, ctypes.byref(rows), ctypes.byref(cols)))
    out = np.empty((rows.value, cols.value), dtype=np.float64)
    check(fn(handle, key, data_pointer(out), out.size, None, None))
    return out


def get_value(fn, handle, key):
    v = c_double()
    check(fn(handle, key, ctypes.byref(v)))
    return v.value


def get_text(fn, handle, key):
    n = c_size_t()
    check(fn(handle, key, None, 0, ctypes.byref(n)))
    buf = ctypes.create_string_buffer(n.value + 1)
    check(fn(handle, key, buf, n.value + 1, None))
    return buf.value.decode("utf-8", "replace")


def make_progress(callback):
    """Wraps a Python callable (done, total) -> truthy-to-continue as a C progress callback that
    returns nonzero to cancel. Exceptions in the callable cancel the computation."""
    if callback is None:
        return None

    def trampoline(_user, done, total):
        try:
            result = callback(int(done), int(total))
        except BaseException:  # noqa: BLE001 - never let an exception cross into C
            return 1
        return 0 if (result is None or result) else 1

    return PROGRESS_FN(trampoline)


# ---- ABI 1.2: item flags, bootstrap ---------------------------------------------------------------

class ItemFlagOptions(ctypes.Structure):
    _fields_ = [("struct_size", c_size_t), ("salient", c_double), ("cross_loading_gap", c_double),
                ("low_communality", c_double), ("heywood_uniqueness", c_double)]


class BootstrapOptions(ctypes.Structure):
    _fields_ = [("struct_size", c_size_t), ("replicates", c_int64), ("level", c_double), ("seed", ctypes.c_uint64),
                ("threads", c_int), ("replicate_random_starts", c_int), ("keep_replicates", c_int),
                ("progress", PROGRESS_FN), ("progress_user", c_void_p)]


_abi_1_2 = {
    "lode_item_flags_options_init": (c_int, [ctypes.POINTER(ItemFlagOptions), c_size_t]),
    "lode_item_flags_compute": (c_int, [c_void_p, ctypes.POINTER(ItemFlagOptions), P_void_p]),
    "lode_item_flags_item_notes": (c_int, [c_void_p, c_int64, c_char_p, c_size_t, P_size_t]),
    "lode_bootstrap_options_init": (c_int, [ctypes.POINTER(BootstrapOptions), c_size_t]),
    "lode_bootstrap_compute": (c_int, [c_void_p, ctypes.POINTER(FitOptions), ctypes.POINTER(BootstrapOptions), P_void_p]),
}
for _kind in ("item_flags", "bootstrap"):
    _abi_1_2[f"lode_{_kind}_matrix"] = (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64])
    _abi_1_2[f"lode_{_kind}_value"] = (c_int, [c_void_p, c_int, P_double])
    _abi_1_2[f"lode_{_kind}_text"] = (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t])
    _abi_1_2[f"lode_{_kind}_free"] = (None, [c_void_p])
# Declared only where the loaded library has them (as for ABI 1.1 above).
declare({name: sig for name, sig in _abi_1_2.items() if hasattr(lib, name)})

ABI_MINOR = _info.abi_minor


def require(name, abi_minor):
    """Raises LodeError when the loaded liblode lacks a function of a later ABI minor version."""
    if not hasattr(lib, name):
        raise LodeError(10, "unsupported", f"{name} needs liblode ABI {ABI_MAJOR}.{abi_minor}; the loaded library "
                                           f"has ABI {ABI_MAJOR}.{ABI_MINOR}")


# ---- ABI 1.4: restricted fit, replication, hold-out check -----------------------------------------

class RestrictedFitOptions(ctypes.Structure):
    _fields_ = [("struct_size", c_size_t), ("max_iterations", c_int), ("tolerance", c_double),
                ("min_uniqueness", c_double), ("interval_level", c_double)]


class ReplicationOptions(ctypes.Structure):
    _fields_ = [("struct_size", c_size_t), ("splits", c_int64), ("seed", ctypes.c_uint64), ("threads", c_int),
                ("progress", PROGRESS_FN), ("progress_user", c_void_p)]


class HoldoutOptions(ctypes.Structure):
    _fields_ = [("struct_size", c_size_t), ("share", c_double), ("seed", ctypes.c_uint64), ("salient", c_double),
                ("restricted", ctypes.POINTER(RestrictedFitOptions))]


_abi_1_4 = {
    "lode_restricted_fit_options_init": (c_int, [ctypes.POINTER(RestrictedFitOptions), c_size_t]),
    "lode_restricted_fit_compute": (c_int, [c_void_p, P_double, c_int64, c_int64, c_int64, c_int64,
                                            ctypes.POINTER(RestrictedFitOptions), P_void_p]),
    "lode_replication_options_init": (c_int, [ctypes.POINTER(ReplicationOptions), c_size_t]),
    "lode_replication_compute": (c_int, [c_void_p, ctypes.POINTER(FitOptions), ctypes.POINTER(ReplicationOptions),
                                         P_void_p]),
    "lode_holdout_options_init": (c_int, [ctypes.POINTER(HoldoutOptions), c_size_t]),
    "lode_holdout_compute": (c_int, [c_void_p, ctypes.POINTER(FitOptions), ctypes.POINTER(HoldoutOptions), P_void_p]),
    "lode_restricted_fit_from_holdout": (c_int, [c_void_p, P_void_p]),
}
for _kind in ("restricted_fit", "replication", "holdout"):
    _abi_1_4[f"lode_{_kind}_matrix"] = (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64])
    _abi_1_4[f"lode_{_kind}_value"] = (c_int, [c_void_p, c_int, P_double])
    _abi_1_4[f"lode_{_kind}_text"] = (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t])
    _abi_1_4[f"lode_{_kind}_free"] = (None, [c_void_p])
declare({name: sig for name, sig in _abi_1_4.items() if hasattr(lib, name)})
