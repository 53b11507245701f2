#!/usr/bin/python3
"""dist/ as a user receives it: SHA256SUMS lists exactly the four artefacts and matches them (the
check the README tells users to run), and the shipped binaries depend on nothing a user's machine
may lack.

  check_dist.py DIST VERSION README

- The Linux liblode is the same link in the .oxt, the wheel and the tarball (one build id; the .oxt's
  copy keeps its symbol table). Its NEEDED libraries
  are glibc's alone (no libfmt, no libstdc++, no libgcc_s), it exports only lode_* symbols, and the
  highest GLIBC_x.y symbol version it needs (objdump -T) is the glibc baseline the README states.
- The extension's UNO component needs the office's UNO libraries, liblode (inside the .oxt) and the
  C++ runtime that LibreOffice itself loads; the highest GLIBCXX_ version it needs is the one the
  README states.
- lode.dll imports Windows system DLLs only (no libstdc++-6.dll, libgcc_s_seh-1.dll or
  libwinpthread-1.dll beside it) and exports only lode_* functions.
"""

import hashlib
import io
import os
import re
import subprocess
import sys
import tarfile
import tempfile
import zipfile

GLIBC_LIBS = {"libc.so.6", "libm.so.6", "ld-linux-x86-64.so.2", "libpthread.so.0", "libdl.so.2"}
UNO_LIBS = {"libuno_cppuhelpergcc3.so.3", "libuno_cppu.so.3", "libuno_sal.so.3"}
CXX_RUNTIME = {"libstdc++.so.6", "libgcc_s.so.1"}
# The DLLs every 64-bit Windows has (mingw-w64's runtime against msvcrt).
WINDOWS_SYSTEM_DLLS = {"kernel32.dll", "msvcrt.dll", "user32.dll", "advapi32.dll"}

failures = []


def check(ok, what):
    print(("ok    " if ok else "FAIL  ") + what)
    if not ok:
        failures.append(what)


def out(cmd):
    return subprocess.run(cmd, check=True, capture_output=True, text=True).stdout


def needed(path):
    return [line.split()[1] for line in out(["objdump", "-p", path]).splitlines() if line.strip().startswith("NEEDED")]


def highest_version(path, prefix):
    """The highest PREFIX_x.y[.z] symbol version among the dynamic symbols objdump -T lists."""
    found = {tuple(int(p) for p in v.split(".")) for v in re.findall(prefix + r"_([0-9]+(?:\.[0-9]+)+)",
                                                                       out(["objdump", "-T", path]))}
    return ".".join(map(str, max(found))) if found else None


def build_id(path):
    """The GNU build id: one link gives one id, whichever way the file was stripped afterwards."""
    m = re.search(r"Build ID: ([0-9a-f]+)", out(["readelf", "-n", path]))
    return m.group(1) if m else None


def defined_exports(path):
    """Dynamic symbols the library defines (nm -D --defined-only), less the version nodes (type A)."""
    rows = [row.split() for row in out(["nm", "-D", "--defined-only", "--without-symbol-versions", path]).splitlines()]
    return [row[-1] for row in rows if len(row) == 3 and row[1] != "A"]


def readme_fact(readme, pattern, what):
    m = re.search(pattern, readme)
    if not m:
        sys.exit(f"check_dist: README.md does not state {what} (pattern {pattern!r})")
    return m.group(1)


def sha256(data):
    return hashlib.sha256(data).hexdigest()


def main():
    dist, version, readme_path = sys.argv[1:4]
    readme = open(readme_path, encoding="utf-8").read()
    names = [f"lode-{version}-linux-x86_64.oxt", f"lode-{version}-py3-none-linux_x86_64.whl",
             f"liblode-{version}-linux-x86_64.tar.gz", f"liblode-{version}-windows-x86_64.zip"]

    # SHA256SUMS: exactly the four, each matching; and `sha256sum -c` (what the README shows) agrees.
    sums = {}
    for line in open(os.path.join(dist, "SHA256SUMS")):
        digest, name = line.rstrip("\n").split("  ", 1)
        sums[name] = digest
    check(sorted(sums) == sorted(names), f"SHA256SUMS lists the four artefacts of {version}: {sorted(sums)}")
    blobs = {n: open(os.path.join(dist, n), "rb").read() for n in names}
    for n in names:
        check(sums.get(n) == sha256(blobs[n]), f"{n} matches its SHA256SUMS line")
    proc = subprocess.run(["sha256sum", "-c", "SHA256SUMS"], cwd=dist, capture_output=True, text=True)
    check(proc.returncode == 0, "sha256sum -c SHA256SUMS passes in dist/")

    with tempfile.TemporaryDirectory(prefix="lode-check-dist-") as tmp:
        # The one Linux liblode, as each artefact carries it.
        copies = {}
        with zipfile.ZipFile(io.BytesIO(blobs[names[0]])) as z:
            lib = [n for n in z.namelist() if re.fullmatch(r"liblode\.so\.\d+", n)]
            check(len(lib) == 1, f".oxt holds one liblode.so.N: {lib}")
            copies["oxt"] = z.read(lib[0])
            component = z.read("lode_calc.uno.so")
        with zipfile.ZipFile(io.BytesIO(blobs[names[1]])) as z:
            lib = [n for n in z.namelist() if re.fullmatch(r"lode/liblode\.so\.\d+", n)]
            check(len(lib) == 1, f"wheel holds lode/liblode.so.N: {lib}")
            check("lode/_abi.py" in z.namelist(), "wheel holds lode/_abi.py (generated from lode.h by the build)")
            copies["wheel"] = z.read(lib[0])
        with tarfile.open(fileobj=io.BytesIO(blobs[names[2]])) as t:
            lib = [m for m in t.getmembers() if m.isfile() and re.search(r"/lib/liblode\.so\.\d+\.\d+\.\d+$", m.name)]
            check(len(lib) == 1, f"tarball holds lib/liblode.so.N.M.P: {[m.name for m in lib]}")
            copies["tarball"] = t.extractfile(lib[0]).read()
        ids = set()
        for key, data in copies.items():
            path = os.path.join(tmp, f"liblode-{key}.so")
            open(path, "wb").write(data)
            ids.add(build_id(path))
        check(len(ids) == 1 and None not in ids, f"the .oxt, the wheel and the tarball carry the same liblode (build ids {ids})")
        so = os.path.join(tmp, "liblode-tarball.so")
        libs = needed(so)
        check(set(libs) <= GLIBC_LIBS, f"liblode needs glibc's libraries only: {libs}")
        check(not any("fmt" in n or "stdc++" in n or "gcc_s" in n for n in libs), "no libfmt, libstdc++ or libgcc_s among NEEDED")
        exports = defined_exports(so)
        check(exports and all(e.startswith("lode_") for e in exports),
              f"liblode exports only lode_* ({len(exports)} symbols; others: {[e for e in exports if not e.startswith('lode_')][:5]})")
        check(highest_version(so, "GLIBCXX") is None and highest_version(so, "CXXABI") is None,
              "liblode needs no GLIBCXX_/CXXABI_ symbol version")
        glibc = highest_version(so, "GLIBC")
        stated = readme_fact(readme, r"needs glibc ([0-9.]+) or newer", "the glibc baseline")
        check(glibc == stated, f"liblode's highest GLIBC_ symbol version is {glibc}; README states {stated}")

        comp = os.path.join(tmp, "lode_calc.uno.so")
        open(comp, "wb").write(component)
        clibs = set(needed(comp))
        lode_so = {n for n in clibs if n.startswith("liblode.so.")}
        check(len(lode_so) == 1 and clibs - lode_so <= GLIBC_LIBS | UNO_LIBS | CXX_RUNTIME,
              f"the UNO component needs glibc, the office's UNO and C++ runtime libraries and liblode only: {sorted(clibs)}")
        glibcxx = highest_version(comp, "GLIBCXX")
        stated = readme_fact(readme, r"GLIBCXX_([0-9.]+)", "the component's libstdc++ baseline")
        check(glibcxx == stated, f"the component's highest GLIBCXX_ version is {glibcxx}; README states {stated}")
        cglibc = highest_version(comp, "GLIBC")
        check(tuple(map(int, cglibc.split("."))) <= tuple(map(int, glibc.split("."))),
              f"the component needs no newer glibc ({cglibc}) than liblode ({glibc})")

        # lode.dll
        with zipfile.ZipFile(io.BytesIO(blobs[names[3]])) as z:
            top = names[3][:-len(".zip")]
            listed = set(z.namelist())
            for member in ("bin/lode.dll", "lib/liblode.dll.a", "lib/lode.def", "include/lode.h"):
                check(f"{top}/{member}" in listed, f"the Windows zip holds {member}")
            dll = os.path.join(tmp, "lode.dll")
            open(dll, "wb").write(z.read(f"{top}/bin/lode.dll"))
        pe = out(["x86_64-w64-mingw32-objdump", "-p", dll])
        imports = sorted({m.lower() for m in re.findall(r"DLL Name: (\S+)", pe)})
        check(set(imports) <= WINDOWS_SYSTEM_DLLS, f"lode.dll imports Windows system DLLs only: {imports}")
        table = pe.split("[Ordinal/Name Pointer] Table", 1)[-1].split("\n\n", 1)[0]  # up to its blank line
        dll_exports = re.findall(r"\[\s*\d+\]\s+(\S+)", table)
        check(dll_exports and all(e.startswith("lode_") for e in dll_exports),
              f"lode.dll exports only lode_* ({len(dll_exports)}; others: {[e for e in dll_exports if not e.startswith('lode_')][:5]})")
        check(sorted(dll_exports) == sorted(exports), "lode.dll exports the same functions as liblode.so")

    print(f"{len(failures)} failed" if failures else "dist/ checks passed")
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
