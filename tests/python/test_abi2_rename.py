"""tools/abi2_rename.py, the mechanical rename of ABI 1.x names to ABI 2.0 (DEVELOPERS.md, "The naming
rule"): whole identifiers only, keys that share a prefix with a renamed enum left alone, idempotent,
and nothing of 1.x left in the header. (This file holds 1.x names on purpose: do not run the tool
over it.)"""

import importlib.util
import os

ROOT = os.path.normpath(os.path.join(os.path.dirname(__file__), "..", ".."))
_spec = importlib.util.spec_from_file_location("abi2_rename", os.path.join(ROOT, "tools", "abi2_rename.py"))
abi2_rename = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(abi2_rename)

OLD = """lode_fit_options fo; lode_fit_options_init(&fo, sizeof fo); fo.method = LODE_ML;
status = lode_fit(corr, &fo, &model); lode_rotation_method_from_name("geomin", &m);
enum lode_rotation_method r = LODE_ROTATION_VARIMAX; lode_rotation_matrix(rot, LODE_ROTATION_PATTERN, ...);
x = LODE_COUNT_SUGGESTED; so.method = LODE_SCORES_TENBERGE; mat(LODE_SCORES_VALUES);
lib.lode_bootstrap(c, f, b, p); lode_bootstrap_free(b); lode_bootstrap_options o; "lode_last_error"
my_lode_fit(); LODE_MLX; LODE_ROTATION_METHOD; LODE_ROTATION_METHOD_NAME
lode_bootstrap_result* b; lib.lode_bootstrap.argtypes = []; lode_rotation_method_name(m);
value(LODE_ALPHA); value(LODE_ALPHA_ITEMS); mat(LODE_OMEGA); mat(LODE_OMEGA_ASSIGNMENT); LODE_ALPHAX;
LODE_RELIABILITY_NOTES; LODE_SCHMID_LEIMAN_OMEGA_HIERARCHICAL
"""

NEW = """lode_model_options fo; lode_model_options_init(&fo, sizeof fo); fo.method = LODE_EXTRACTION_ML;
status = lode_model_compute(corr, &fo, &model); lode_criterion_from_name("geomin", &m);
enum lode_criterion r = LODE_CRITERION_VARIMAX; lode_rotation_matrix(rot, LODE_ROTATION_PATTERN, ...);
x = LODE_FACTOR_COUNT_SUGGESTED; so.method = LODE_ESTIMATOR_CORRELATION_PRESERVING; mat(LODE_SCORES_VALUES);
lib.lode_bootstrap_compute(c, f, b, p); lode_bootstrap_free(b); lode_bootstrap_options o; "lode_error_message"
my_lode_fit(); LODE_MLX; LODE_ROTATION_METHOD; LODE_ROTATION_METHOD_NAME
lode_bootstrap* b; lib.lode_bootstrap_compute.argtypes = []; lode_criterion_name(m);
value(LODE_RELIABILITY_ALPHA); value(LODE_RELIABILITY_ALPHA_ITEMS); mat(LODE_RELIABILITY_OMEGA); mat(LODE_RELIABILITY_OMEGA_ASSIGNMENT); LODE_ALPHAX;
LODE_RELIABILITY_NOTES; LODE_SCHMID_LEIMAN_OMEGA_HIERARCHICAL
"""


def test_whole_identifiers_are_renamed_and_nothing_else():
    assert abi2_rename.rename(OLD) == NEW


def test_a_second_run_changes_nothing():
    assert abi2_rename.rename(NEW) == NEW


def test_files_are_rewritten_in_place(tmp_path):
    (tmp_path / "sub").mkdir()
    f = tmp_path / "sub" / "caller.c"
    f.write_text(OLD)
    assert abi2_rename.main(["--check", str(tmp_path)]) == 1
    assert f.read_text() == OLD
    assert abi2_rename.main([str(tmp_path)]) == 0
    assert f.read_text() == NEW
    assert abi2_rename.main(["--check", str(tmp_path)]) == 0


def test_the_header_holds_no_abi_1_name():
    with open(os.path.join(ROOT, "capi", "include", "lode.h")) as f:
        text = f.read()
    assert abi2_rename.rename(text) == text
