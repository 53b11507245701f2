"""Where the binding looks for liblode (capi/python/lode/_native.py, _candidates): the order the
README states, checked on made-up folder layouts. Common practice of the packaging, no outside source."""

import os

from lode import _native


def _touch(path):
    os.makedirs(os.path.dirname(path), exist_ok=True)
    open(path, "wb").close()
    return path


def test_lode_library_wins(tmp_path, monkeypatch):
    monkeypatch.setenv("LODE_LIBRARY", "/somewhere/liblode.so.2")
    assert list(_native._candidates(str(tmp_path))) == ["/somewhere/liblode.so.2"]


def test_windows_zip_layout_finds_bin(tmp_path, monkeypatch):
    """The zip: <prefix>/lib/lode/python/lode is the package, <prefix>/bin/lode.dll the library."""
    monkeypatch.delenv("LODE_LIBRARY", raising=False)
    here = tmp_path / "lib" / "lode" / "python" / "lode"
    here.mkdir(parents=True)
    dll = _touch(str(tmp_path / "bin" / "lode.dll"))
    found = list(_native._candidates(str(here), platform="win32"))
    assert found[0] == dll
    assert not any(p.endswith(".so.2") for p in found)
    # a lode.dll inside the package comes first
    inside = _touch(str(here / "lode.dll"))
    assert list(_native._candidates(str(here), platform="win32"))[:2] == [inside, dll]


def test_wheel_layout_finds_the_library_inside_the_package(tmp_path, monkeypatch):
    monkeypatch.delenv("LODE_LIBRARY", raising=False)
    here = tmp_path / "site-packages" / "lode"
    so = _touch(str(here / "liblode.so.2"))
    assert list(_native._candidates(str(here), platform="linux"))[0] == so


def test_installed_prefix_finds_libdir(tmp_path, monkeypatch):
    """cmake --install: <prefix>/lib/lode/python/lode is the package, <prefix>/lib/liblode.so.2."""
    monkeypatch.delenv("LODE_LIBRARY", raising=False)
    here = tmp_path / "lib" / "lode" / "python" / "lode"
    here.mkdir(parents=True)
    so = _touch(str(tmp_path / "lib" / "liblode.so.2"))
    assert list(_native._candidates(str(here), platform="linux"))[0] == so
