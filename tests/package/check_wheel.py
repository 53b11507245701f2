#!/usr/bin/python3
"""The wheel from dist/ installed into a fresh virtual environment, then the Python suite
(tests/python) run against the installed package, with no LODE_LIBRARY and no source tree on the
path.

  check_wheel.py WHEEL VERSION TESTS_PYTHON_DIR

The environment is made with --system-site-packages because no Python package index is reachable
from the machines that build and test Lode: numpy (the wheel's one dependency) and the suite's own
tools (pytest, scipy, statsmodels, scikit-learn) come from Debian's packages. pip installs the wheel
from the file alone (--no-index) and without --no-deps, so it must find every declared dependency
already satisfied: a dependency beyond numpy would make the install fail.
"""

import os
import subprocess
import sys
import tempfile
import zipfile


def run(cmd, **kw):
    print("+", " ".join(cmd), flush=True)
    subprocess.run(cmd, check=True, **kw)


def main():
    wheel, version, suite = sys.argv[1:4]
    with zipfile.ZipFile(wheel) as z:
        meta = z.read(f"lode-{version}.dist-info/METADATA").decode()
        tag = z.read(f"lode-{version}.dist-info/WHEEL").decode()
    requires = sorted(line.split(":", 1)[1].strip() for line in meta.splitlines() if line.startswith("Requires-Dist:"))
    assert requires == ["numpy"], f"the wheel must depend on numpy alone, it declares {requires}"
    assert "Tag: py3-none-linux_x86_64" in tag and "Root-Is-Purelib: false" in tag, tag
    assert f"Version: {version}" in meta, meta[:300]

    env = {k: v for k, v in os.environ.items() if k not in ("LODE_LIBRARY", "PYTHONPATH", "PYTHONHOME")}
    env.update(PYTHONDONTWRITEBYTECODE="1", PIP_NO_INDEX="1", PIP_DISABLE_PIP_VERSION_CHECK="1")
    with tempfile.TemporaryDirectory(prefix="lode-wheel-venv-") as tmp:
        venv = os.path.join(tmp, "venv")
        run(["/usr/bin/python3", "-m", "venv", "--system-site-packages", venv], env=env)
        py = os.path.join(venv, "bin", "python")
        run([py, "-m", "pip", "install", "--no-index", "--no-cache-dir", wheel], env=env, cwd=tmp)
        # Imported from the environment, its liblode from inside the package, the version the same.
        probe = ("import lode, os, sys; v = lode.version(); "
                 "print(lode.__file__, lode._native.lib._name, v['version']); "
                 f"assert lode.__file__.startswith({venv!r} + os.sep), lode.__file__; "
                 "assert lode._native.lib._name.startswith(os.path.dirname(lode.__file__) + os.sep); "
                 f"assert v['version'] == {version!r}, v")
        run([py, "-c", probe], env=env, cwd=tmp)
        run([py, "-m", "pytest", "-q", "-p", "no:cacheprovider", suite], env=dict(env, LODE_PYTHON_INSTALLED="1"),
            cwd=tmp)
    print("the wheel installs into a fresh environment and passes the Python suite")


if __name__ == "__main__":
    main()
