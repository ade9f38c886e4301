"""Shared test helpers: optional modules and programs are skipped locally but required in CI."""
import importlib
import os

import pytest


def in_ci():
    return bool(os.environ.get("CI"))


def need_module(name):
    """Imports an optional module: a skip on a developer's machine, a failure when CI is set
    (.ci/run exports CI=1 and .ci/install-deps installs every module the suite uses)."""
    try:
        return importlib.import_module(name)
    except ImportError as e:
        if in_ci():
            pytest.fail(f"{name} is missing in CI ({e}); add its Debian package to .ci/install-deps")
        pytest.skip(f"{name} is not installed ({e})")


def need_cli():
    """The path of the disc program (DISC_CLI, set by ctest); in CI a missing one is a failure."""
    path = os.environ.get("DISC_CLI")
    if not path:
        if in_ci():
            pytest.fail("DISC_CLI is not set in CI: run the Python tests through ctest")
        pytest.skip("DISC_CLI is not set (ctest sets it)")
    return path
