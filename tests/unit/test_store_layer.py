"""The store owns every query (DEVELOPERS.md, Layers): no module outside trials/store
imports SQLAlchemy, the use cases reach the database only through trials.store, and
the answer checks are pure."""

from __future__ import annotations

import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
PACKAGE = ROOT / "trials"
STORE = PACKAGE / "store"


def _imports(path: Path) -> set[str]:
    names: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            names.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module:
            names.add(node.module)
    return names


def _modules_outside_the_store() -> list[Path]:
    found = [p for p in PACKAGE.rglob("*.py") if STORE not in p.parents]
    found += list((ROOT / "pages").rglob("*.py"))
    return found


def test_no_module_outside_the_store_imports_sqlalchemy():
    offenders = {
        str(p.relative_to(ROOT)): sorted(n for n in _imports(p) if n.split(".")[0] == "sqlalchemy")
        for p in _modules_outside_the_store()
    }
    offenders = {k: v for k, v in offenders.items() if v}
    assert offenders == {}


def test_the_layer_check_sees_the_use_cases_and_the_screens():
    # the walk above must cover the use-case package and the screens, or it proves nothing
    seen = {str(p.relative_to(ROOT)) for p in _modules_outside_the_store()}
    assert "trials/service/trials.py" in seen
    assert "pages/results.py" in seen
    assert "trials/store/trials.py" not in seen
    assert "sqlalchemy" in _imports(STORE / "trials.py")


def test_the_store_never_imports_the_use_cases_or_the_screens():
    for path in STORE.rglob("*.py"):
        bad = {n for n in _imports(path)
               if n.startswith(("trials.service", "trials.ui", "trials.app", "streamlit"))}
        assert not bad, f"{path} imports {bad}"


def test_the_answer_check_is_pure():
    bad = {n for n in _imports(PACKAGE / "answers.py")
           if n.startswith(("trials.store", "sqlalchemy", "streamlit"))}
    assert bad == set()



def test_every_use_case_module_stays_small():
    # issue 12: use-case modules under about 400 lines, no module of the package over 800
    sizes = {str(p.relative_to(ROOT)): len(p.read_text(encoding="utf-8").splitlines())
             for p in PACKAGE.rglob("*.py")}
    assert {k: v for k, v in sizes.items() if v > 800} == {}
    assert {k: v for k, v in sizes.items() if k.startswith("trials/service/") and v > 420} == {}
