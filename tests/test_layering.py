"""The layers hold: the import-linter contracts in pyproject.toml pass, they fail when an upward import
is added, and the core loads no storage or interface and never reads a clock."""

from __future__ import annotations

import ast
import os
import shutil
import subprocess
import sys
from pathlib import Path

import caseload

PACKAGE = Path(caseload.__file__).parent
PROJECT = PACKAGE.parent
LINT = [sys.executable, "-c", "import sys; from importlinter.cli import lint_imports_command; sys.exit(lint_imports_command())",
        "--no-cache"]


def lint(project: Path) -> subprocess.CompletedProcess:
    env = {**os.environ, "PYTHONPATH": str(project)}  # the package found first is the one in `project`
    return subprocess.run([*LINT, "--config", str(project / "pyproject.toml")], cwd=project, env=env, capture_output=True, text=True)


def test_the_layer_contracts_are_kept():
    result = lint(PROJECT)
    assert result.returncode == 0, result.stdout + result.stderr


def test_an_upward_import_breaks_the_contract(tmp_path):
    shutil.copytree(PACKAGE, tmp_path / "caseload", ignore=shutil.ignore_patterns("__pycache__"))
    shutil.copy(PROJECT / "pyproject.toml", tmp_path / "pyproject.toml")
    (tmp_path / "caseload" / "application" / "upward.py").write_text("import caseload.tui.app\n")
    (tmp_path / "caseload" / "core" / "stored.py").write_text("import sqlite3\n")
    (tmp_path / "caseload" / "core" / "clocked.py").write_text("import pendulum\n")
    result = lint(tmp_path)
    assert result.returncode == 1
    assert "caseload.application is not allowed to import caseload.tui" in result.stdout
    assert "caseload.core is not allowed to import sqlite3" in result.stdout
    assert "caseload.core is not allowed to import pendulum" in result.stdout


def test_core_imports_no_storage_or_ui():
    code = (
        "import sys, caseload.core.analysis, caseload.core.parse, caseload.core.snapshot;"
        "import pkgutil, importlib, caseload.core as c;"
        "[importlib.import_module('caseload.core.' + m.name) for m in pkgutil.iter_modules(c.__path__)];"
        "bad = [m for m in ('sqlite3', 'sqlite_utils', 'textual', 'click') if m in sys.modules];"
        "print(','.join(bad))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


CLOCKS = {"now", "today", "utcnow", "time", "monotonic", "perf_counter", "local"}


def test_core_never_reads_a_clock():
    """Today is always an argument in the core: no now(), today(), time() or pendulum.local()."""
    calls = []
    for path in (PACKAGE / "core").rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text())):
            if isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute) and node.func.attr in CLOCKS:
                calls.append(f"{path.relative_to(PACKAGE)}:{node.lineno} {node.func.attr}()")
    assert calls == []
