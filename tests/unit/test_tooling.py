"""The maintainer's habits hold (issue 12): ruff is clean at line length 100 and mypy is
clean on the pure layers and the store, with the settings in pyproject.toml."""

from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
BIN = Path(sys.executable).parent


def _tool(name: str) -> str:
    found = BIN / name
    if found.exists():
        return str(found)
    path = shutil.which(name)
    if path is None:
        pytest.fail(f"{name} is not installed; it is in the project's test extra")
    return path


def test_ruff_finds_nothing():
    run = subprocess.run([_tool("ruff"), "check", "trials", "pages", "tests", "benchmarks",
                          "scripts"], cwd=ROOT, capture_output=True, text=True)
    assert run.returncode == 0, run.stdout + run.stderr


@pytest.mark.slow
def test_mypy_is_clean_on_the_pure_layers_and_the_store():
    run = subprocess.run([_tool("mypy"), "trials/stats", "trials/design", "trials/store"],
                         cwd=ROOT, capture_output=True, text=True)
    assert run.returncode == 0, run.stdout + run.stderr
