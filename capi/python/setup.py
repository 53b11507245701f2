"""Only what pyproject.toml cannot say: the version (LODE_VERSION, from CMake through
packaging/make_dist.py) and the wheel's tag. The package is pure Python over ctypes, so it fits
every Python 3 ("py3-none"), but the liblode inside it is a Linux x86-64 binary ("linux_x86_64")."""

import os

from setuptools import Distribution, setup
from wheel.bdist_wheel import bdist_wheel

version = os.environ.get("LODE_VERSION")
if not version:
    raise SystemExit("setup.py: LODE_VERSION is not set; build the wheel with ./lode package")


class WithLibrary(Distribution):
    def has_ext_modules(self):
        return True  # it holds a shared library: installed as platform-specific (platlib)


class LinuxWheel(bdist_wheel):
    def get_tag(self):
        return "py3", "none", "linux_x86_64"


setup(version=version, distclass=WithLibrary, cmdclass={"bdist_wheel": LinuxWheel})
