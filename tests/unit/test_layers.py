"""The layers of DESIGN.md hold: the pure and lower layers never import streamlit,
and trials/stats and trials/design never import the store, the service or I/O layers."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[2] / "trials"
NO_STREAMLIT = ["stats", "design", "store", "printing"]
PURE = ["stats", "design"]
FORBIDDEN_IN_PURE = ("trials.store", "trials.service", "trials.printing", "trials.cli",
                     "trials.tabular", "sqlalchemy", "streamlit")


def _imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    names: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module:
            names.add(node.module)
    return names


@pytest.mark.parametrize("layer", NO_STREAMLIT)
def test_lower_layers_never_import_streamlit(layer):
    for path in (PACKAGE / layer).rglob("*.py"):
        bad = {n for n in _imports(path) if n.split(".")[0] == "streamlit"}
        assert not bad, f"{path} imports {bad}"


@pytest.mark.parametrize("layer", PURE)
def test_pure_layers_import_nothing_from_above(layer):
    for path in (PACKAGE / layer).rglob("*.py"):
        bad = {n for n in _imports(path) if n.startswith(FORBIDDEN_IN_PURE)}
        assert not bad, f"{path} imports {bad}"


def test_only_the_entry_script_and_ui_import_streamlit_in_the_package():
    allowed = {PACKAGE / "app.py", PACKAGE / "ui.py"}
    for path in PACKAGE.rglob("*.py"):
        if path in allowed:
            continue
        bad = {n for n in _imports(path) if n.split(".")[0] == "streamlit"}
        assert not bad, f"{path} imports {bad}"


def test_the_entry_script_is_not_beside_a_pages_folder():
    # DESIGN.md: a pages/ folder beside the entry script turns on legacy page detection.
    assert not (PACKAGE / "pages").exists()
