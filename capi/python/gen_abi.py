#!/usr/bin/env python3
"""Writes lode/_abi.py, the Python side of lode.h: every enum value and result key as an integer
constant of the same name, the ABI version, and every option struct of the header as a ctypes
Structure of the same name with the same fields in the same order.

  gen_abi.py HEADER OUT      (CMake runs it whenever lode.h changes; DEVELOPERS.md, "The C ABI")

The header is read, not compiled: enums are `enum lode_x { NAME = number, ... };` and structs are
`typedef struct lode_x { type name[, name]; ... } lode_x;` (comments removed first). A declaration of
a kind this generator does not know stops it with the header's line, so the binding never silently
diverges from the header; tests/python/test_abi_module.py checks the result against a compiled C
probe of the same header (values and sizeof/offsetof).
"""

import re
import sys

# C types of option-struct fields -> the ctypes expression that lays them out the same.
CTYPES = {
    "size_t": "ctypes.c_size_t",
    "int": "ctypes.c_int",
    "double": "ctypes.c_double",
    "int64_t": "ctypes.c_int64",
    "uint64_t": "ctypes.c_uint64",
    "void*": "ctypes.c_void_p",
    "const char*": "ctypes.c_char_p",
    "int32_t": "ctypes.c_int32",
    "const double*": "ctypes.POINTER(ctypes.c_double)",
    "const int64_t*": "ctypes.POINTER(ctypes.c_int64)",
    "const int32_t*": "ctypes.POINTER(ctypes.c_int32)",
    "const int*": "ctypes.POINTER(ctypes.c_int)",
    "const char* const*": "ctypes.POINTER(ctypes.c_char_p)",
    "lode_progress_fn": "lode_progress_fn",
}


def strip_comments(text):
    text = re.sub(r"/\*.*?\*/", lambda m: "\n" * m.group(0).count("\n"), text, flags=re.S)
    return re.sub(r"//[^\n]*", "", text)


def _entries(body, separator):
    """The non-empty entries of a declaration body split at `separator`, white space folded."""
    for entry in body.split(separator):
        entry = " ".join(entry.split())
        if entry:
            yield entry


def enums(text):
    """[(enum type, [(name, value), ...]), ...] in header order."""
    out = []
    for m in re.finditer(r"\benum\s+(lode_\w+)\s*\{(.*?)\}\s*;", text, flags=re.S):
        values = []
        for entry in _entries(m.group(2), ","):
            e = re.fullmatch(r"(LODE_\w+)\s*=\s*(-?\d+)", entry)
            if not e:
                raise SystemExit(f"gen_abi: enum {m.group(1)}: cannot read '{entry}' (give every value a number)")
            values.append((e.group(1), int(e.group(2))))
        out.append((m.group(1), values))
    return out


def structs(text):
    """[(struct name, [(field, ctypes expression), ...]), ...] in header order."""
    out, known = [], set()
    for m in re.finditer(r"\btypedef\s+struct\s+(lode_\w+)\s*\{(.*?)\}\s*(\w+)\s*;", text, flags=re.S):
        name, body = m.group(1), m.group(2)
        if m.group(3) != name:
            raise SystemExit(f"gen_abi: struct {name} is typedef'd as {m.group(3)}")
        fields = []
        for decl in _entries(body, ";"):
            d = re.fullmatch(r"((?:const\s+)?\w+\s*\**)\s*(\w+(?:\s*,\s*\w+)*)", decl)
            if not d:
                raise SystemExit(f"gen_abi: struct {name}: cannot read the field '{decl}'")
            ctype = re.sub(r"\s*\*", "*", d.group(1).strip())
            target = re.fullmatch(r"const (lode_\w+)\*", ctype)
            if target and target.group(1) in known:
                expr = f"ctypes.POINTER({target.group(1)})"
            elif ctype in CTYPES:
                expr = CTYPES[ctype]
            else:
                raise SystemExit(f"gen_abi: struct {name}: no ctypes type for '{ctype}' (add it to CTYPES)")
            fields += [(f.strip(), expr) for f in d.group(2).split(",")]
        out.append((name, fields))
        known.add(name)
    return out


def render(text):
    major = re.search(r"#define LODE_ABI_VERSION_MAJOR (\d+)", text).group(1)
    minor = re.search(r"#define LODE_ABI_VERSION_MINOR (\d+)", text).group(1)
    if not re.search(r"typedef int \(\*lode_progress_fn\)\(void\* user, int64_t done, int64_t total\);", text):
        raise SystemExit("gen_abi: lode_progress_fn is no longer int (*)(void*, int64_t, int64_t): update gen_abi.py")
    code = strip_comments(text)
    lines = ['"""Generated from lode.h by capi/python/gen_abi.py when the library is built: do not edit."""',
             "", "import ctypes", "", f"LODE_ABI_VERSION_MAJOR = {major}", f"LODE_ABI_VERSION_MINOR = {minor}", "",
             "# typedef int (*lode_progress_fn)(void* user, int64_t done, int64_t total);",
             "lode_progress_fn = ctypes.CFUNCTYPE(ctypes.c_int, ctypes.c_void_p, ctypes.c_int64, ctypes.c_int64)"]
    for enum, values in enums(code):
        lines += ["", f"# enum {enum}"] + [f"{n} = {v}" for n, v in values]
    for name, fields in structs(code):
        lines += ["", "", f"class {name}(ctypes.Structure):", "    _fields_ = ["]
        lines += [f'        ("{f}", {e}),' for f, e in fields] + ["    ]"]
    names = [n for _, vs in enums(code) for n, _ in vs]
    if len(set(names)) != len(names):
        raise SystemExit("gen_abi: an enum value's name is used twice in lode.h")
    lines += ["", "", "# The names above by enum type, and the structs (tests compare them with the header).", "ENUMS = {"]
    for enum, values in enums(code):
        lines += [f'    "{enum}": ('] + [f'        "{n}",' for n, _ in values] + ["    ),"]
    lines += ["}", "STRUCTS = ("] + [f"    {n}," for n, _ in structs(code)] + [")"]
    return "\n".join(lines) + "\n"


def main(argv):
    header, out = argv[1], argv[2]
    with open(header, encoding="utf-8") as f:
        text = render(f.read())
    try:
        with open(out, encoding="utf-8") as f:
            if f.read() == text:
                return 0  # unchanged: keep the timestamp
    except FileNotFoundError:
        pass
    with open(out, "w", encoding="utf-8") as f:
        f.write(text)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
