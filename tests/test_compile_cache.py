"""PyTensor's compiled modules in the user's cache folder (assess.updating.compile_cache).

References
- XDG Base Directory Specification 0.8: $XDG_CACHE_HOME, default $HOME/.cache; a
  relative path in it is invalid and ignored.
- PyTensor configuration: PYTENSOR_FLAGS "base_compiledir=..." sets where compiled
  modules go (PyTensor documentation, config module; from memory).
"""

import os
import subprocess
import sys
from pathlib import Path

from assess.updating import compile_cache


def test_cache_folder_follows_xdg_and_the_override(monkeypatch, tmp_path):
    monkeypatch.delenv(compile_cache.CACHE_VARIABLE, raising=False)
    monkeypatch.setattr(compile_cache.sys, "platform", "linux")
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    assert compile_cache.compile_cache_dir() == tmp_path / "xdg" / "assess" / "pytensor"
    monkeypatch.setenv("XDG_CACHE_HOME", "relative/path")  # invalid: the default instead
    assert compile_cache.compile_cache_dir() == Path.home() / ".cache" / "assess" / "pytensor"
    monkeypatch.setenv(compile_cache.CACHE_VARIABLE, str(tmp_path / "mine"))
    assert compile_cache.compile_cache_dir() == tmp_path / "mine"


def test_a_compile_folder_the_user_chose_is_left_alone(monkeypatch, tmp_path):
    monkeypatch.setitem(sys.modules, "pytensor", None)  # imported already: too late
    assert compile_cache.place_compile_cache() is None
    monkeypatch.delitem(sys.modules, "pytensor")
    monkeypatch.setenv("PYTENSOR_FLAGS", f"base_compiledir={tmp_path / 'theirs'}")
    monkeypatch.setenv(compile_cache.CACHE_VARIABLE, str(tmp_path / "ours"))
    assert compile_cache.place_compile_cache() is None
    assert os.environ["PYTENSOR_FLAGS"] == f"base_compiledir={tmp_path / 'theirs'}"


def test_pytensor_compiles_into_the_cache_folder(tmp_path):
    # a fresh interpreter: assess.updating is imported before PyTensor, as in every run
    env = {k: v for k, v in os.environ.items() if k != "PYTENSOR_FLAGS"}
    env["PYTENSOR_FLAGS"] = "cxx="  # no C compiler: nothing is compiled into the new folder
    env[compile_cache.CACHE_VARIABLE] = str(tmp_path / "cache")
    code = ("import assess.updating, pytensor; "
            "print(pytensor.config.base_compiledir); print(pytensor.config.compiledir)")
    out = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True,
                         check=True, timeout=120).stdout.split()
    assert Path(out[0]) == tmp_path / "cache"
    assert Path(out[1]).parent == tmp_path / "cache"
