"""The layers, checked by import-linter's contracts in pyproject.toml (not by hope)."""

from __future__ import annotations

import pathlib
import shutil
import subprocess
import sys

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1]
pytestmark = pytest.mark.skipif(shutil.which("lint-imports") is None and not (pathlib.Path(sys.executable).parent / "lint-imports").exists(),
                                reason="import-linter is not installed")


def _lint(config: pathlib.Path | None = None) -> subprocess.CompletedProcess:
    exe = pathlib.Path(sys.executable).parent / "lint-imports"
    cmd = [str(exe) if exe.exists() else "lint-imports"] + (["--config", str(config)] if config else [])
    return subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True, timeout=300)


def test_every_layering_contract_is_kept():
    out = _lint()
    assert out.returncode == 0, out.stdout[-2000:] + out.stderr[-2000:]
    assert "3 kept, 0 broken" in out.stdout


def test_a_broken_contract_is_caught(tmp_path):
    # The same tool on a contract the code breaks on purpose (views import Qt): it must fail,
    # or the check above would prove nothing.
    config = tmp_path / "broken.toml"
    config.write_text(
        '[tool.importlinter]\nroot_package = "refplane"\ninclude_external_packages = true\n\n'
        '[[tool.importlinter.contracts]]\nname = "views without Qt (false on purpose)"\n'
        'type = "forbidden"\nsource_modules = ["refplane.views"]\nforbidden_modules = ["PySide6"]\n')
    out = _lint(config)
    assert out.returncode != 0 and "BROKEN" in out.stdout
