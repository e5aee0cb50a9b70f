"""The analysis layer and the command line must never pull in Qt (design card: one direction only)."""

import ast
import pathlib
import subprocess
import sys

import pytest

APP = pathlib.Path(__file__).resolve().parents[2] / "app" / "refplane"
QT_MODULES = ("PySide6", "pyqtgraph", "PyQt5", "PyQt6", "shiboken6")


def _imports(path: pathlib.Path):
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield alias.name
        elif isinstance(node, ast.ImportFrom) and node.module:
            yield node.module


@pytest.mark.parametrize("path", sorted((APP / "analysis").rglob("*.py")), ids=lambda p: p.name)
def test_analysis_module_imports_no_qt(path):
    bad = [m for m in _imports(path) if m.split(".")[0] in QT_MODULES or m.startswith("refplane.views")]
    assert not bad, f"{path.name} imports {bad}; the analysis layer must stay free of Qt and views"


def test_importing_every_analysis_module_loads_no_qt():
    names = [f"refplane.analysis.{p.stem}" for p in sorted((APP / "analysis").glob("*.py")) if p.stem != "__init__"]
    code = (
        "import importlib, sys\n"
        f"for n in {names!r}: importlib.import_module(n)\n"
        "import refplane.cli.read, refplane.cli.common\n"
        f"bad = [m for m in sys.modules if m.split('.')[0] in {QT_MODULES!r}]\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "", f"Qt was imported: {out.stdout}"
