"""Settings of the window's tool panels (antenna, cable, time domain, uncertainty, limits) as
frozen session records, saved with the session.

Each panel's settings are one frozen dataclass registered here by name; the session holds one
value per name (:meth:`~refplane.session.model.Session.tool`, ``set_tool``) and announces a
change with ``toolChanged(name)``. Session files store each as a JSON object of its fields, so
a panel's settings come back with the session. A settings class must use plain JSON-able field
types (numbers, text, booleans, None, tuples of those).
"""

from __future__ import annotations

import dataclasses
from typing import Any

#: name → settings class; filled by :func:`register`.
REGISTRY: dict[str, type] = {}


def register(name: str):
    """Class decorator: make a frozen dataclass the settings of the tool ``name``."""
    def wrap(cls):
        if not dataclasses.is_dataclass(cls):
            raise TypeError(f"{cls.__name__} must be a dataclass")
        REGISTRY[name] = cls
        return cls
    return wrap


def default(name: str):
    """A tool's default settings (KeyError for an unknown tool)."""
    return REGISTRY[name]()


def to_json(value) -> dict[str, Any]:
    """A settings value as a JSON object of its fields (tuples as lists)."""
    out = {}
    for f in dataclasses.fields(value):
        v = getattr(value, f.name)
        out[f.name] = list(v) if isinstance(v, tuple) else v
    return out


def from_json(name: str, obj: dict) -> object:
    """Settings of tool ``name`` from a JSON object; unknown keys are refused (ValueError)."""
    cls = REGISTRY[name]
    known = {f.name: f for f in dataclasses.fields(cls)}
    unknown = set(obj) - set(known)
    if unknown:
        raise ValueError(f"unknown settings {sorted(unknown)}")
    values = {}
    for key, v in obj.items():
        f = known[key]
        default = f.default if f.default is not dataclasses.MISSING else (
            f.default_factory() if f.default_factory is not dataclasses.MISSING else None)
        # The default's kind says what the field holds (None allows anything of the plain kinds).
        if isinstance(default, bool) and not isinstance(v, bool):
            raise ValueError(f"{key}: expected true or false")
        if isinstance(default, (int, float)) and not isinstance(default, bool) and v is not None \
                and (isinstance(v, bool) or not isinstance(v, (int, float))):
            raise ValueError(f"{key}: expected a number")
        if isinstance(default, str) and not isinstance(v, str):
            raise ValueError(f"{key}: expected text")
        if isinstance(default, tuple) and not isinstance(v, list):
            raise ValueError(f"{key}: expected a list")
        values[key] = tuple(v) if isinstance(v, list) else v
    return cls(**values)


# The tool panels' records register themselves; importing them here makes sure they are known
# before any session file is read (a saved record of an unknown tool would be refused).
from refplane.session import tool_settings as _tool_settings  # noqa: E402,F401
