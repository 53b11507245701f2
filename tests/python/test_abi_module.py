"""lode/_abi.py, generated from lode.h when the library is built (capi/python/gen_abi.py), against the
header itself as the C compiler reads it: every enum value and result key equals the constant of the
same name, every option struct has the compiler's size and field offsets, and every enum value and
struct of the header is in the module (a probe program is compiled from lode.h and run)."""

import ctypes
import os
import re
import shutil
import subprocess

import pytest

from lode import _abi

HEADER_DIR = os.path.normpath(os.path.join(os.path.dirname(__file__), "..", "..", "capi", "include"))
HEADER = os.path.join(HEADER_DIR, "lode.h")


def run_probe(tmp_path, body):
    """Compiles `body` (statements of main) against lode.h with the system C compiler, runs it, and
    returns its output lines as (name, numbers...) tuples."""
    cc = shutil.which("cc") or shutil.which("gcc")
    assert cc, "a C compiler (cc) is needed to read lode.h as C does"
    src = tmp_path / "probe.c"
    src.write_text('#include "lode.h"\n#include <stddef.h>\n#include <stdio.h>\nint main(void) {\n' + body +
                   "  return 0;\n}\n")
    exe = tmp_path / "probe"
    subprocess.run([cc, "-std=c99", "-I", HEADER_DIR, str(src), "-o", str(exe)], check=True)
    out = subprocess.run([str(exe)], check=True, capture_output=True, text=True).stdout
    return [line.split() for line in out.splitlines()]


def header_code():
    with open(HEADER) as f:
        return re.sub(r"/\*.*?\*/", "", f.read(), flags=re.S)


def test_every_enum_value_and_key_equals_the_header(tmp_path):
    names = [n for values in _abi.ENUMS.values() for n in values]
    body = "".join(f'  printf("{n} %lld\\n", (long long){n});\n' for n in names)
    compiled = {name: int(value) for name, value in run_probe(tmp_path, body)}
    assert compiled == {n: getattr(_abi, n) for n in names}
    assert (_abi.LODE_ABI_VERSION_MAJOR, _abi.LODE_ABI_VERSION_MINOR) == tuple(
        int(x) for x in run_probe(tmp_path, '  printf("v %d %d\\n", LODE_ABI_VERSION_MAJOR, LODE_ABI_VERSION_MINOR);\n')[0][1:])


def test_the_module_misses_nothing_of_the_header():
    code = header_code()
    header_values = set(re.findall(r"\b(LODE_[A-Z0-9_]+)\s*=", code))
    module_values = {n for values in _abi.ENUMS.values() for n in values}
    assert header_values == module_values
    header_structs = set(re.findall(r"typedef struct (lode_\w+) \{", code))
    assert header_structs == {s.__name__ for s in _abi.STRUCTS}


def test_option_structs_have_the_layout_of_the_header(tmp_path):
    body = ""
    for struct in _abi.STRUCTS:
        name = struct.__name__
        body += f'  printf("{name} %zu\\n", sizeof({name}));\n'
        for field, _ in struct._fields_:
            body += f'  printf("{name}.{field} %zu %zu\\n", offsetof({name}, {field}), sizeof((({name}*)0)->{field}));\n'
    compiled = {row[0]: [int(x) for x in row[1:]] for row in run_probe(tmp_path, body)}
    for struct in _abi.STRUCTS:
        name = struct.__name__
        assert compiled[name] == [ctypes.sizeof(struct)], name
        for field, ctype in struct._fields_:
            assert compiled[f"{name}.{field}"] == [getattr(struct, field).offset, ctypes.sizeof(ctype)], (name, field)


@pytest.mark.parametrize("struct", [s for s in _abi.STRUCTS if s.__name__.endswith("_options")],
                         ids=lambda s: s.__name__)
def test_every_options_struct_is_filled_by_its_init(struct):
    # The generated struct is the one the library fills: its _init accepts the full size and writes it.
    import lode
    o = struct()
    assert getattr(lode.lib, struct.__name__ + "_init")(ctypes.byref(o), ctypes.sizeof(o)) == 0
    assert o.struct_size == ctypes.sizeof(struct)
