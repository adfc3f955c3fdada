"""Build backend: setuptools' own hooks, with every wheel built in an empty build folder.

setuptools installs whatever lies in ``<build_base>/lib`` into the wheel, so a module
deleted from the source would still ship from an old in-tree ``build/``. Each wheel here
gets a fresh temporary build base (distutils reads it from ``DIST_EXTRA_CONFIG``).
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from setuptools import build_meta as _setuptools
from setuptools.build_meta import *  # noqa: F403  (every other hook, unchanged)


def build_wheel(wheel_directory, config_settings=None, metadata_directory=None):
    with tempfile.TemporaryDirectory(prefix="reportgen-build-") as tmp:
        cfg = Path(tmp) / "build.cfg"
        cfg.write_text(f"[build]\nbuild_base = {Path(tmp) / 'build'}\n", encoding="utf-8")
        before = os.environ.get("DIST_EXTRA_CONFIG")
        os.environ["DIST_EXTRA_CONFIG"] = str(cfg)
        try:
            return _setuptools.build_wheel(wheel_directory, config_settings,
                                           metadata_directory)
        finally:
            if before is None:
                os.environ.pop("DIST_EXTRA_CONFIG", None)
            else:
                os.environ["DIST_EXTRA_CONFIG"] = before
