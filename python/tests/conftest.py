"""Shared fixtures of the netfold module's tests (run by ctest as `python_module`).

ctest sets PYTHONPATH to the built module, NETFOLD_SOURCE_DIR to the source tree and
NETFOLD_BINARY to the built command line, which some tests run for parity with the module.
"""
import json
import os
import pathlib
import subprocess

import pytest

SOURCE_DIR = pathlib.Path(os.environ.get("NETFOLD_SOURCE_DIR", pathlib.Path(__file__).resolve().parents[2]))
BINARY = pathlib.Path(os.environ.get("NETFOLD_BINARY", SOURCE_DIR / "build" / "netfold"))
VALVE_COIL = "netlists/valve_coil.nf"  # relative, as the command line is given it below


@pytest.fixture(autouse=True)
def in_source_dir(monkeypatch):
    """Every test runs in the source tree, so that paths read as in the docs."""
    monkeypatch.chdir(SOURCE_DIR)


def run_cli(*args, expect_status=0):
    """Runs the built `netfold` and returns its standard output."""
    done = subprocess.run([str(BINARY), *args], capture_output=True, text=True, cwd=SOURCE_DIR)
    assert done.returncode == expect_status, done.stderr
    return done.stdout


def cli_json(*args):
    return json.loads(run_cli(*args, "--json", "-"))
