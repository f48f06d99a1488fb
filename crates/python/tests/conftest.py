"""Shared fixtures: the repository root and the CLI binary the module is compared with."""

import os
import pathlib
import subprocess

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[3]


@pytest.fixture(scope="session")
def cli():
    """Run ``nivalis`` (``$NIVALIS_CLI``, default target/debug/nivalis): returns stdout bytes."""
    exe = os.environ.get("NIVALIS_CLI", str(ROOT / "target" / "debug" / "nivalis"))
    if not os.path.exists(exe):
        pytest.fail(f"{exe} not found: build it first (cargo build -p nivalis-cli)")

    def run(*args, check=True):
        done = subprocess.run([exe, *map(str, args)], cwd=ROOT, capture_output=True)
        if check and done.returncode != 0:
            raise AssertionError(done.stderr.decode())
        return done

    return run


@pytest.fixture(scope="session")
def root():
    return ROOT
