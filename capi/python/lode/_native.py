"""Loading liblode and declaring its C functions for ctypes (internal to the lode package)."""

import ctypes
import ctypes.util
import os
import sys

import numpy as np

from . import _abi

ABI_MAJOR = _abi.LODE_ABI_VERSION_MAJOR

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

PROGRESS_FN = _abi.lode_progress_fn


class LodeError(Exception):
    """An error reported by liblode: `status` is the C status code, `status_name` its name and
    `message` the library's explanation (which item, which value, how many rows survive)."""

    def __init__(self, status, status_name, message):
        super().__init__(f"{message} [{status_name}]" if message else status_name)
        self.status = status
        self.status_name = status_name
        self.message = message


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
    names = ("lode.dll",) if windows else ("liblode.so.2", "liblode.so", "liblode.dylib")
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
    "lode_version": (ctypes.POINTER(_abi.lode_version_info), []),
    "lode_status_name": (c_char_p, [c_int]),
    "lode_error_message": (c_char_p, []),
    "lode_data_from_raw": (c_int, [P_double, c_int64, c_int64, c_int64, c_int64, P_void_p]),
    "lode_data_from_correlation": (c_int, [P_double, c_int64, c_int64, c_int64, c_int64, P_void_p]),
    "lode_data_from_covariance": (c_int, [P_double, c_int64, c_int64, c_int64, c_int64, P_void_p]),
    "lode_data_set_item_names": (c_int, [c_void_p, ctypes.POINTER(c_char_p), c_int64]),
    "lode_data_shape": (c_int, [c_void_p, P_int64, P_int64]),
    "lode_data_free": (None, [c_void_p]),
    "lode_correlation_options_init": (c_int, [ctypes.POINTER(_abi.lode_correlation_options), c_size_t]),
    "lode_correlation_compute": (c_int, [c_void_p, ctypes.POINTER(_abi.lode_correlation_options), P_void_p]),
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


_count_signatures = {
    "lode_factor_count_options_init": (c_int, [ctypes.POINTER(_abi.lode_factor_count_options), c_size_t]),
    "lode_factor_count_compute": (c_int, [c_void_p, ctypes.POINTER(_abi.lode_factor_count_options), P_void_p]),
    "lode_factor_count_matrix": (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64]),
    "lode_factor_count_value": (c_int, [c_void_p, c_int, P_double]),
    "lode_factor_count_text": (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t]),
    "lode_factor_count_free": (None, [c_void_p]),
}
declare(_count_signatures)


# The size of lode_model_options without its last fields (progress): what a caller built against a
# shorter struct passes; the library takes the defaults for the fields beyond it.
FIT_OPTIONS_SIZE_WITHOUT_PROGRESS = _abi.lode_model_options.progress.offset


_getters = {}
for _kind in ("rotation", "model"):
    _getters[f"lode_{_kind}_matrix"] = (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64])
    _getters[f"lode_{_kind}_value"] = (c_int, [c_void_p, c_int, P_double])
    _getters[f"lode_{_kind}_text"] = (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t])
    _getters[f"lode_{_kind}_free"] = (None, [c_void_p])
_getters.update({
    "lode_criterion_from_name": (c_int, [c_char_p, ctypes.POINTER(c_int)]),
    "lode_criterion_name": (c_char_p, [c_int]),
    "lode_rotation_options_init": (c_int, [ctypes.POINTER(_abi.lode_rotation_options), c_size_t]),
    "lode_rotation_compute": (c_int, [P_double, c_int64, c_int64, c_int64, c_int64,
                                      ctypes.POINTER(_abi.lode_rotation_options), P_void_p]),
    "lode_model_options_init": (c_int, [ctypes.POINTER(_abi.lode_model_options), c_size_t]),
    "lode_model_compute": (c_int, [c_void_p, ctypes.POINTER(_abi.lode_model_options), P_void_p]),
})
declare(_getters)


_more = {}
for _kind in ("scores", "reliability"):
    _more[f"lode_{_kind}_matrix"] = (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64])
    _more[f"lode_{_kind}_value"] = (c_int, [c_void_p, c_int, P_double])
    _more[f"lode_{_kind}_text"] = (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t])
    _more[f"lode_{_kind}_free"] = (None, [c_void_p])
_more.update({
    "lode_scores_options_init": (c_int, [ctypes.POINTER(_abi.lode_scores_options), c_size_t]),
    "lode_scores_compute": (c_int, [c_void_p, c_void_p, ctypes.POINTER(_abi.lode_scores_options), P_void_p]),
    "lode_reliability_compute_alpha": (c_int, [c_void_p, P_void_p]),
    "lode_reliability_compute_omega": (c_int, [c_void_p, P_int64, c_int64, P_void_p]),
    "lode_reliability_compute_scale_omega": (c_int, [c_void_p, ctypes.POINTER(_abi.lode_model_options), P_void_p]),
    "lode_comparison_compute": (c_int, [P_double, P_double, c_int64, c_int64, c_int64, c_int64, c_int64, c_int64,
                                      P_void_p]),
    "lode_comparison_matrix": (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64]),
    "lode_comparison_text": (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t]),
    "lode_comparison_free": (None, [c_void_p]),
})
declare(_more)


def check(status):
    """Raises LodeError for a failing status, with the library's message."""
    if status != 0:
        name = lib.lode_status_name(status).decode()
        message = lib.lode_error_message().decode("utf-8", "replace")
        raise LodeError(status, name, message)


def options(struct_name, **fields):
    """The option struct `struct_name` of lode.h (e.g. "lode_model_options") filled with the library's
    defaults by its `_init` function, then the given fields."""
    o = getattr(_abi, struct_name)()
    check(getattr(lib, struct_name + "_init")(ctypes.byref(o), ctypes.sizeof(o)))
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


def attach_progress(opts, progress):
    """Sets ``opts.progress`` to a C callback wrapping ``progress`` (None: left unset) and returns the
    callback, which the caller keeps alive until the C call returns."""
    callback = make_progress(progress)
    if callback is not None:
        opts.progress = callback
    return callback


def readers(prefix, pointer):
    """The three getters of one handle (`prefix` e.g. "lode_model") as functions of a key: its
    matrices (numpy arrays), its numbers and its texts."""
    return (lambda key: get_matrix(getattr(lib, prefix + "_matrix"), pointer, key),
            lambda key: get_value(getattr(lib, prefix + "_value"), pointer, key),
            lambda key: get_text(getattr(lib, prefix + "_text"), pointer, key))


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


# ---- item flags, bootstrap -----------------------------------------------------------------------


_uncertainty_signatures = {
    "lode_item_flags_options_init": (c_int, [ctypes.POINTER(_abi.lode_item_flags_options), c_size_t]),
    "lode_item_flags_compute": (c_int, [c_void_p, ctypes.POINTER(_abi.lode_item_flags_options), P_void_p]),
    "lode_item_flags_item_notes": (c_int, [c_void_p, c_int64, c_char_p, c_size_t, P_size_t]),
    "lode_bootstrap_options_init": (c_int, [ctypes.POINTER(_abi.lode_bootstrap_options), c_size_t]),
    "lode_bootstrap_compute": (c_int, [c_void_p, ctypes.POINTER(_abi.lode_model_options),
                                       ctypes.POINTER(_abi.lode_bootstrap_options), P_void_p]),
}
for _kind in ("item_flags", "bootstrap"):
    _uncertainty_signatures[f"lode_{_kind}_matrix"] = (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64])
    _uncertainty_signatures[f"lode_{_kind}_value"] = (c_int, [c_void_p, c_int, P_double])
    _uncertainty_signatures[f"lode_{_kind}_text"] = (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t])
    _uncertainty_signatures[f"lode_{_kind}_free"] = (None, [c_void_p])
declare(_uncertainty_signatures)


# ---- restricted fit, replication, hold-out check ------------------------------------------------

_replication_signatures = {
    "lode_restricted_fit_options_init": (c_int, [ctypes.POINTER(_abi.lode_restricted_fit_options), c_size_t]),
    "lode_restricted_fit_compute": (c_int, [c_void_p, P_double, c_int64, c_int64, c_int64, c_int64,
                                            ctypes.POINTER(_abi.lode_restricted_fit_options), P_void_p]),
    "lode_replication_options_init": (c_int, [ctypes.POINTER(_abi.lode_replication_options), c_size_t]),
    "lode_replication_compute": (c_int, [c_void_p, ctypes.POINTER(_abi.lode_model_options),
                                         ctypes.POINTER(_abi.lode_replication_options), P_void_p]),
    "lode_holdout_options_init": (c_int, [ctypes.POINTER(_abi.lode_holdout_options), c_size_t]),
    "lode_holdout_compute": (c_int, [c_void_p, ctypes.POINTER(_abi.lode_model_options),
                                     ctypes.POINTER(_abi.lode_holdout_options), P_void_p]),
    "lode_restricted_fit_from_holdout": (c_int, [c_void_p, P_void_p]),
}
for _kind in ("restricted_fit", "replication", "holdout"):
    _replication_signatures[f"lode_{_kind}_matrix"] = (c_int, [c_void_p, c_int, P_double, c_size_t, P_int64, P_int64])
    _replication_signatures[f"lode_{_kind}_value"] = (c_int, [c_void_p, c_int, P_double])
    _replication_signatures[f"lode_{_kind}_text"] = (c_int, [c_void_p, c_int, c_char_p, c_size_t, P_size_t])
    _replication_signatures[f"lode_{_kind}_free"] = (None, [c_void_p])
declare(_replication_signatures)
