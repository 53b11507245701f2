#!/usr/bin/env python3
"""Renames the C ABI 1.x names of liblode to their ABI 2.0 names (DEVELOPERS.md, "The C ABI: naming").

  tools/abi2_rename.py PATH...          rewrite the given files, or every text file under the given folders
  tools/abi2_rename.py --check PATH...  rewrite nothing; list the files that still hold a 1.x name (exit 1)

Each name is replaced as a whole identifier only (word boundaries, `_` counting as part of a word), so
`lode_fit` becomes `lode_model_compute` while `lode_fit_options` follows its own entry, and
`LODE_ROTATION_PATTERN` (a key) stays while the rotation criteria (`LODE_ROTATION_VARIMAX`, ...) become
`LODE_CRITERION_*`. Every new name differs from every old one, so a second run changes nothing (the
one name that is both, `lode_bootstrap`, the 1.x function and the 2.0 handle type, is renamed only
where it is called). Numbers
(key values, enum integers) and struct layouts are not touched: only names change.

Folders are walked without `.git`, `build*` folders and this script; files that are not UTF-8 text are
skipped. The ABI snapshot (capi/abi/liblode.abi) is regenerated from the library, not renamed.
"""

import argparse
import os
import re
import sys

FUNCTIONS = {
    "lode_correlate": "lode_correlation_compute",
    "lode_assess_factorability": "lode_factorability_compute",
    "lode_count_factors": "lode_factor_count_compute",
    "lode_fit": "lode_model_compute",
    "lode_fit_options_init": "lode_model_options_init",
    "lode_rotate": "lode_rotation_compute",
    "lode_score": "lode_scores_compute",
    "lode_score_options_init": "lode_scores_options_init",
    "lode_cronbach_alpha": "lode_reliability_compute_alpha",
    "lode_mcdonald_omega": "lode_reliability_compute_omega",
    "lode_omega_single_scale": "lode_reliability_compute_scale_omega",
    "lode_compare_loadings": "lode_comparison_compute",
    "lode_rotation_method_from_name": "lode_criterion_from_name",
    "lode_rotation_method_name": "lode_criterion_name",
    "lode_flag_items": "lode_item_flags_compute",
    "lode_item_flag_options_init": "lode_item_flags_options_init",
    "lode_last_error": "lode_error_message",
}

TYPES = {
    "lode_fit_options": "lode_model_options",
    "lode_score_options": "lode_scores_options",
    "lode_item_flag_options": "lode_item_flags_options",
    "lode_correlation_kind": "lode_coefficient",
    "lode_rotation_method": "lode_criterion",
    "lode_extraction_method": "lode_extraction",
    "lode_score_method": "lode_estimator",
    "lode_score_missing": "lode_gaps",
    "lode_item_flag_kind": "lode_flag",
    "lode_bootstrap_result": "lode_bootstrap",
}

CRITERIA = ["NONE", "VARIMAX", "VARIMAX_KAISER", "QUARTIMAX", "EQUAMAX", "CRAWFORD_FERGUSON", "GEOMIN_ORTHOGONAL",
            "TARGET_ORTHOGONAL", "OBLIMIN", "QUARTIMIN", "CRAWFORD_FERGUSON_OBLIQUE", "GEOMIN", "TARGET_OBLIQUE",
            "PROMAX"]

ENUM_VALUES = {
    "LODE_PEARSON": "LODE_COEFFICIENT_PEARSON",
    "LODE_SPEARMAN": "LODE_COEFFICIENT_SPEARMAN",
    "LODE_POLYCHORIC": "LODE_COEFFICIENT_POLYCHORIC",
    "LODE_PAIRWISE": "LODE_MISSING_PAIRWISE",
    "LODE_LISTWISE": "LODE_MISSING_LISTWISE",
    "LODE_RANDOM_NORMAL": "LODE_RANDOM_SOURCE_NORMAL",
    "LODE_RANDOM_PERMUTATION": "LODE_RANDOM_SOURCE_PERMUTATION",
    "LODE_ML": "LODE_EXTRACTION_ML",
    "LODE_PAF": "LODE_EXTRACTION_PAF",
    "LODE_MINRES": "LODE_EXTRACTION_MINRES",
    "LODE_PCA": "LODE_EXTRACTION_PCA",
    "LODE_SCORES_REGRESSION": "LODE_ESTIMATOR_REGRESSION",
    "LODE_SCORES_BARTLETT": "LODE_ESTIMATOR_BARTLETT",
    "LODE_SCORES_TENBERGE": "LODE_ESTIMATOR_CORRELATION_PRESERVING",
    "LODE_SCORE_FROM_ANSWERED": "LODE_GAPS_FROM_ANSWERED",
    "LODE_SCORE_LEAVE_MISSING": "LODE_GAPS_LEAVE_MISSING",
    **{f"LODE_ROTATION_{c}": f"LODE_CRITERION_{c}" for c in CRITERIA},
}

RENAMES = {**FUNCTIONS, **TYPES, **ENUM_VALUES}

# Every key of the factor count handle: LODE_COUNT_<X> -> LODE_FACTOR_COUNT_<X>.
COUNT_KEY = re.compile(r"\bLODE_COUNT_([A-Z0-9_]+)\b")
# Every key of the reliability handle: LODE_ALPHA[_<X>] -> LODE_RELIABILITY_ALPHA[_<X>], likewise OMEGA.
RELIABILITY_KEY = re.compile(r"\bLODE_(ALPHA|OMEGA)((?:_[A-Z0-9_]+)?)\b")
# The 1.x function lode_bootstrap is now lode_bootstrap_compute, while its handle type (1.x
# lode_bootstrap_result) is now lode_bootstrap: the function is renamed only where it is called or
# declared (followed by "(") or named as a ctypes attribute (.argtypes, .restype, .errcheck), never
# the type, so a second run leaves both alone.
BOOTSTRAP_FUNCTION = re.compile(r"\blode_bootstrap\b(?=\s*\(|\.(?:argtypes|restype|errcheck)\b)")
# Longest names first, so the alternation never stops at a shorter name (the boundaries make this
# belt and braces).
NAME = re.compile(r"\b(" + "|".join(sorted(map(re.escape, RENAMES), key=len, reverse=True)) + r")\b")
SKIP_DIRS = {".git", "__pycache__", "node_modules"}


def rename(text):
    """The text with every ABI 1.x name replaced by its 2.0 name."""
    text = BOOTSTRAP_FUNCTION.sub("lode_bootstrap_compute", text)
    text = NAME.sub(lambda m: RENAMES[m.group(1)], text)
    text = RELIABILITY_KEY.sub(r"LODE_RELIABILITY_\1\2", text)
    return COUNT_KEY.sub(r"LODE_FACTOR_COUNT_\1", text)


def files_under(paths):
    me = os.path.realpath(__file__)
    for path in paths:
        if os.path.isdir(path):
            for root, dirs, names in os.walk(path):
                dirs[:] = sorted(d for d in dirs if d not in SKIP_DIRS and not d.startswith("build"))
                for name in sorted(names):
                    full = os.path.join(root, name)
                    if os.path.realpath(full) != me and not os.path.islink(full):
                        yield full
        elif os.path.realpath(path) != me:
            yield path


def main(argv):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--check", action="store_true", help="list files holding a 1.x name; change nothing")
    ap.add_argument("paths", nargs="+")
    args = ap.parse_args(argv)
    touched = []
    for path in files_under(args.paths):
        try:
            with open(path, encoding="utf-8", newline="") as f:
                text = f.read()
        except (UnicodeDecodeError, IsADirectoryError):
            continue
        new = rename(text)
        if new == text:
            continue
        touched.append(path)
        if not args.check:
            with open(path, "w", encoding="utf-8", newline="") as f:
                f.write(new)
    for path in touched:
        print(path)
    return 1 if args.check and touched else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
