"""Install a test package from ``tests/plugins/<name>/`` the way a user installs a plugin.

``pip install --no-deps --no-index --no-build-isolation --target DIR`` builds the package's
wheel with the setuptools already installed (no network) and installs it into ``DIR``, its
``*.dist-info/entry_points.txt`` included; a ``hazlint`` started with ``DIR`` on
``PYTHONPATH`` finds its entry points through :mod:`importlib.metadata` as it finds any
installed distribution's. The source is copied first, so the build's ``build/`` and
``*.egg-info`` folders never land in the checkout. About a second per package.
"""
from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

PLUGINS = Path(__file__).resolve().parent.parent / "plugins"


def _check_build_tools() -> None:
    """setuptools builds a wheel with the 'wheel' package, or by itself from 70.1 on (the
    test extra installs both)."""
    import importlib.util
    try:
        import setuptools
    except ImportError:
        pytest.fail("setuptools is required to build the test plugins: pip install -e '.[test]'")
    got = tuple(int(x) for x in setuptools.__version__.split(".")[:2] if x.isdigit())
    if got < (70, 1) and importlib.util.find_spec("wheel") is None:
        pytest.fail(f"setuptools {setuptools.__version__} needs the 'wheel' package to build "
                    f"the test plugins: pip install -e '.[test]'")


def install_plugin(name: str, workdir: Path) -> Path:
    """Build and install ``tests/plugins/<name>`` into ``workdir/site``; returns that folder
    (put it on ``PYTHONPATH``, see :func:`plugin_env`)."""
    _check_build_tools()
    src = workdir / f"src-{name}"
    shutil.copytree(PLUGINS / name, src)
    site = workdir / "site"
    env = dict(os.environ, PIP_DISABLE_PIP_VERSION_CHECK="1", PIP_ROOT_USER_ACTION="ignore")
    p = subprocess.run([sys.executable, "-m", "pip", "install", "-q", "--no-deps", "--no-index",
                        "--no-build-isolation", "--target", str(site), str(src)],
                       capture_output=True, text=True, env=env, timeout=300)
    assert p.returncode == 0, p.stdout + p.stderr
    return site


def plugin_env(site: Path) -> dict[str, str]:
    """The environment of a subprocess that sees the packages installed in ``site``."""
    path = os.environ.get("PYTHONPATH")
    return dict(os.environ, PYTHONPATH=str(site) + (os.pathsep + path if path else ""))
