#!/usr/bin/python3
"""Writes dist/: the four artefacts a user downloads and dist/SHA256SUMS (./lode package).

Called by the package build's target `lode_dist` (packaging/link.cmake), which passes the version
(CMake's project version: the one place it is set) and the built files:

  lode-<v>-linux-x86_64.oxt               the Calc extension as built (build/package)
  lode-<v>-py3-none-linux_x86_64.whl      capi/python with the tarball's liblode inside, built by
                                          pip from capi/python/pyproject.toml (offline: Debian's
                                          setuptools)
  liblode-<v>-linux-x86_64.tar.gz         `cmake --install` of build/package, component capi
  liblode-<v>-windows-x86_64.zip          `cmake --install` of build/windows, component capi

Archives are written with sorted entries, fixed times and owners, so the same build gives the same
bytes.
"""

import argparse
import gzip
import hashlib
import io
import os
import shutil
import subprocess
import sys
import tarfile
import tempfile
import zipfile

EPOCH = 315532800  # 1980-01-01, the earliest time a zip entry can hold


def run(cmd, **kw):
    proc = subprocess.run(cmd, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True, **kw)
    if proc.returncode != 0:
        sys.exit(f"make_dist: {' '.join(cmd)} failed ({proc.returncode}):\n{proc.stdout}")
    return proc.stdout


def install(cmake, build, prefix):
    # SOURCE_DATE_EPOCH: strip writes it, not the current time, into the PE header of lode.dll.
    run([cmake, "--install", build, "--prefix", prefix, "--component", "capi", "--strip"],
        env=dict(os.environ, SOURCE_DATE_EPOCH=str(EPOCH)))


def files_under(root):
    out = []
    for folder, dirs, files in os.walk(root):
        dirs.sort()
        for name in sorted(files):
            out.append(os.path.join(folder, name))
    return out


def write_tar_gz(root, top, path):
    """root's contents under the folder `top`, as a reproducible .tar.gz (symlinks kept)."""
    buf = io.BytesIO()
    with tarfile.open(fileobj=buf, mode="w", format=tarfile.PAX_FORMAT) as tar:
        entries = [root]
        for folder, dirs, files in os.walk(root):
            dirs.sort()
            entries += [os.path.join(folder, d) for d in dirs] + [os.path.join(folder, f) for f in sorted(files)]
        for p in entries:
            info = tar.gettarinfo(p, arcname=top if p == root else os.path.join(top, os.path.relpath(p, root)))
            info.mtime, info.uid, info.gid, info.uname, info.gname = EPOCH, 0, 0, "root", "root"
            info.mode = 0o755 if (info.isdir() or info.mode & 0o111) else 0o644
            if info.isfile():
                with open(p, "rb") as f:
                    tar.addfile(info, f)
            else:
                tar.addfile(info)
    with open(path, "wb") as f, gzip.GzipFile(fileobj=f, mode="wb", mtime=EPOCH, filename="") as gz:
        gz.write(buf.getvalue())


def write_zip(root, top, path):
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for p in files_under(root):
            info = zipfile.ZipInfo(os.path.join(top, os.path.relpath(p, root)), (1980, 1, 1, 0, 0, 0))
            info.external_attr = (0o755 if os.access(p, os.X_OK) else 0o644) << 16
            info.compress_type = zipfile.ZIP_DEFLATED
            with open(p, "rb") as f:
                z.writestr(info, f.read())


def build_wheel(version, source, library, soname, out):
    """pip builds the wheel from a copy of capi/python with liblode beside the package's modules."""
    with tempfile.TemporaryDirectory(prefix="lode-wheel-") as tmp:
        stage = os.path.join(tmp, "src")
        shutil.copytree(source, stage, ignore=shutil.ignore_patterns("__pycache__", "*.pyc", "build", "*.egg-info"))
        shutil.copyfile(library, os.path.join(stage, "lode", soname))
        env = dict(os.environ, LODE_VERSION=version, SOURCE_DATE_EPOCH=str(EPOCH), PYTHONDONTWRITEBYTECODE="1")
        # Offline on purpose: Debian's setuptools and wheel build it, nothing is fetched.
        run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "--no-index",
             "--wheel-dir", os.path.join(tmp, "wheel"), stage], env=env)
        built = os.listdir(os.path.join(tmp, "wheel"))
        if len(built) != 1:
            sys.exit(f"make_dist: pip built {built}, expected one wheel")
        shutil.copyfile(os.path.join(tmp, "wheel", built[0]), out)


def sha256(path):
    h = hashlib.sha256()
    with open(path, "rb") as f:
        for block in iter(lambda: f.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--version", required=True)
    ap.add_argument("--cmake", default="cmake")
    ap.add_argument("--linux-build", required=True, help="build/package")
    ap.add_argument("--windows-build", required=True, help="build/windows")
    ap.add_argument("--oxt", required=True)
    ap.add_argument("--soname", required=True, help="liblode's SONAME, e.g. liblode.so.2")
    ap.add_argument("--python", required=True, help="capi/python")
    ap.add_argument("--out", required=True, help="dist/")
    a = ap.parse_args()
    v = a.version
    names = {
        "oxt": f"lode-{v}-linux-x86_64.oxt",
        "wheel": f"lode-{v}-py3-none-linux_x86_64.whl",
        "linux": f"liblode-{v}-linux-x86_64.tar.gz",
        "windows": f"liblode-{v}-windows-x86_64.zip",
    }
    if not os.path.exists(os.path.join(a.windows_build, "CMakeCache.txt")):
        sys.exit(f"make_dist: {a.windows_build} is not configured (cmake --preset windows; ./lode package does it)")
    shutil.rmtree(a.out, ignore_errors=True)
    os.makedirs(a.out)
    with tempfile.TemporaryDirectory(prefix="lode-dist-") as tmp:
        shutil.copyfile(a.oxt, os.path.join(a.out, names["oxt"]))
        for key, build, write in (("linux", a.linux_build, write_tar_gz), ("windows", a.windows_build, write_zip)):
            top = names[key].rsplit(".tar.gz", 1)[0].rsplit(".zip", 1)[0]
            prefix = os.path.join(tmp, key)
            install(a.cmake, build, prefix)
            write(prefix, top, os.path.join(a.out, names[key]))
        # The wheel carries the tarball's (stripped) library.
        (library,) = [os.path.realpath(p) for p in files_under(os.path.join(tmp, "linux")) if os.path.basename(p) == a.soname]
        build_wheel(v, a.python, library, a.soname, os.path.join(a.out, names["wheel"]))
    with open(os.path.join(a.out, "SHA256SUMS"), "w") as f:
        for key in ("oxt", "wheel", "linux", "windows"):
            f.write(f"{sha256(os.path.join(a.out, names[key]))}  {names[key]}\n")
    for key in ("oxt", "wheel", "linux", "windows"):
        print(f"dist/{names[key]}  ({os.path.getsize(os.path.join(a.out, names[key])) // 1024} KiB)")
    print("dist/SHA256SUMS")


if __name__ == "__main__":
    main()
