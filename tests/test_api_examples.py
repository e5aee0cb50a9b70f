"""The Python API examples in the README run as written.

The blocks are taken from README.md's "Python API" section when it has one (after the lead
folds the text in), else from docs/python-api.md. Each block runs in a fresh namespace, in a
temporary folder holding a copy of sample_sweeps/, so the examples' relative paths work and
nothing is written into the repository.
"""

from __future__ import annotations

import pathlib
import re
import shutil

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1]


def _section(text: str, title: str) -> str | None:
    match = re.search(rf"^(#+)\s+{re.escape(title)}\s*$", text, flags=re.M)
    if not match:
        return None
    level = len(match.group(1))
    rest = text[match.end():]
    end = re.search(rf"^#{{1,{level}}}\s", rest, flags=re.M)
    return rest[: end.start()] if end else rest


def _blocks() -> list[str]:
    readme = ROOT / "README.md"
    section = _section(readme.read_text(encoding="utf-8"), "Python API") if readme.exists() else None
    if section is None:
        section = (ROOT / "docs" / "python-api.md").read_text(encoding="utf-8")
    return re.findall(r"^```python\n(.*?)^```", section, flags=re.M | re.S)


BLOCKS = _blocks()


def test_there_are_examples():
    assert len(BLOCKS) >= 5


@pytest.mark.parametrize("code", BLOCKS, ids=[f"block{i + 1}" for i in range(len(BLOCKS))])
def test_example_runs(code, tmp_path, monkeypatch, capsys):
    shutil.copytree(ROOT / "sample_sweeps", tmp_path / "sample_sweeps")
    monkeypatch.chdir(tmp_path)
    exec(compile(code, "<README example>", "exec"), {"__name__": "__example__"})
    assert capsys.readouterr().out.strip(), "an example should print what it shows"
