"""Pieces shared by the sub-commands: argument types, JSON output, tables."""

from __future__ import annotations

import argparse
import json
import math
import sys
from typing import Callable, Iterable, Sequence

from refplane.analysis.errors import AnalysisError


def arg_type(parse: Callable[[str], object], what: str) -> Callable[[str], object]:
    """Wrap an SI-text parser as an argparse type, so bad text is a usage error (status 2)."""

    def convert(text: str):
        try:
            return parse(text)
        except AnalysisError as exc:
            raise argparse.ArgumentTypeError(str(exc)) from None

    convert.__name__ = what
    return convert


def json_safe(value):
    """Replace NaN and infinities (not valid JSON) with ``None``, recursively."""
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {k: json_safe(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [json_safe(v) for v in value]
    return value


def print_json(obj) -> None:
    """Print ``obj`` as indented, strictly valid JSON on stdout."""
    json.dump(json_safe(obj), sys.stdout, indent=2, allow_nan=False)
    sys.stdout.write("\n")


def format_table(headers: Sequence[str], rows: Iterable[Sequence[str]]) -> str:
    """Align text columns: the first left-aligned, the others right-aligned."""
    rows = [list(map(str, r)) for r in rows]
    widths = [max([len(h)] + [len(r[i]) for r in rows]) for i, h in enumerate(headers)]

    def line(cells: Sequence[str]) -> str:
        return "  ".join(c.ljust(w) if i == 0 else c.rjust(w) for i, (c, w) in enumerate(zip(cells, widths)))

    return "\n".join([line(headers), line(["-" * w for w in widths])] + [line(r) for r in rows])
