#!/usr/bin/python3
"""The Windows zip from dist/ used as a Windows developer would: the C test suite (tests/capi:
capi_test.c with its capi_<handle>_test.c files, strict C99, and header_cxx_test.cpp, the header from C++) cross-built with Debian's
mingw-w64 against the zip's lode.h and import library alone, then run under Debian's wine64 with
lode.dll beside the programs, in a fresh wine prefix. Every case must pass.

  check_windows.py ZIP TESTS_CAPI_DIR WORK
"""

import glob
import os
import shutil
import subprocess
import sys
import zipfile

CC = "x86_64-w64-mingw32-gcc-posix"
CXX = "x86_64-w64-mingw32-g++-posix"
WINE = "/usr/lib/wine/wine64"  # Debian's wine64 (the `wine` launcher script is in another package)


def run(cmd, **kw):
    print("+", " ".join(cmd), flush=True)
    return subprocess.run(cmd, check=True, **kw)


def main():
    zip_path, tests, work = sys.argv[1:4]
    shutil.rmtree(work, ignore_errors=True)
    os.makedirs(work)
    with zipfile.ZipFile(zip_path) as z:
        z.extractall(work)
    (top,) = [d for d in glob.glob(os.path.join(work, "liblode-*-windows-x86_64")) if os.path.isdir(d)]
    inc, dll = os.path.join(top, "include"), os.path.join(top, "bin", "lode.dll")
    implib = os.path.join(top, "lib", "liblode.dll.a")
    run_dir = os.path.join(work, "run")
    os.makedirs(run_dir)
    shutil.copy(dll, run_dir)  # Windows finds a program's DLLs in the program's own folder first

    # __USE_MINGW_ANSI_STDIO: C99 printf formats (%zu, %lld) rather than msvcrt's; the test prints them.
    # -static: the programs' own C/C++ runtime linked in (a fresh wine prefix has no mingw DLLs); the
    # import library is named by its path so that -static does not look for a liblode.a instead.
    c_exe = os.path.join(run_dir, "capi_test.exe")
    # capi_check.c: the check macros' counters and reporting, shared by every C test program
    c_sources = [os.path.join(tests, "capi_test.c"), os.path.join(tests, "capi_check.c")] + sorted(
        glob.glob(os.path.join(tests, "capi_*_test.c")))
    run([CC, "-std=c99", "-pedantic", "-Werror", "-Wall", "-Wextra", "-D__USE_MINGW_ANSI_STDIO=1", "-I", inc,
         *c_sources, "-o", c_exe, implib, "-static"])
    cxx_exe = os.path.join(run_dir, "header_cxx_test.exe")
    run([CXX, "-std=c++20", "-Werror", "-Wall", "-Wextra", "-I", inc, os.path.join(tests, "header_cxx_test.cpp"),
         "-o", cxx_exe, implib, "-static"])

    env = dict(os.environ, WINEPREFIX=os.path.join(work, "wineprefix"), WINEDEBUG="-all", WINEDLLOVERRIDES="mscoree,mshtml=")
    failed = []
    for exe in (c_exe, cxx_exe):
        proc = subprocess.run([WINE, exe], cwd=run_dir, env=env, stdout=subprocess.PIPE, stderr=subprocess.STDOUT,
                              text=True, timeout=600)
        print(proc.stdout)
        print(f"{os.path.basename(exe)} under wine64: exit {proc.returncode}", flush=True)
        if proc.returncode != 0:
            failed.append(os.path.basename(exe))
    subprocess.run(["/usr/lib/wine/wineserver", "-k"], env=env, check=False)
    if failed:
        sys.exit(f"failed under wine64: {failed}")
    print("the C test suite passes against the Windows zip under wine64")


if __name__ == "__main__":
    main()
