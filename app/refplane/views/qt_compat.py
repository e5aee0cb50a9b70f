"""A guard for one known-bad combination: PySide6 6.12.x on Python older than 3.12.

With that combination the Qt event loop releases references to ``None``, ``True`` and
``False`` that it never took (seen here: about one per processed event). Python 3.12 and later
make these objects immortal, so nothing happens there; on 3.11 their counts run down to zero
within a few hundred repaints and the interpreter aborts ("deallocating None").

:func:`guard_singletons` gives the three singletons a very large reference count once, which
is what Python 3.12 does for them anyway; they are never freed in either case. It only acts on
the affected combination. The proper fix is a PySide6 outside 6.12.x (6.11.3 is unaffected)
or Python ≥ 3.12.
"""

from __future__ import annotations

import sys

_GUARDED = False
_HEADROOM = 1 << 40


def affected() -> bool:
    """True for CPython < 3.12 with PySide6 6.12.x."""
    if sys.implementation.name != "cpython" or sys.version_info >= (3, 12):
        return False
    try:
        from importlib.metadata import version

        v = version("PySide6-Essentials")
    except Exception:  # noqa: BLE001 - the full PySide6 wheel, or no metadata
        try:
            import PySide6

            v = PySide6.__version__
        except Exception:  # noqa: BLE001
            return False
    return v.startswith("6.12.")


def guard_singletons() -> bool:
    """Raise the reference counts of None, True and False on the affected combination.

    Returns True when the guard was applied (now or earlier).
    """
    global _GUARDED
    if _GUARDED:
        return True
    if not affected():
        return False
    import ctypes

    for obj in (None, True, False):
        # ob_refcnt is the first field of every CPython object (Include/object.h).
        ctypes.c_ssize_t.from_address(id(obj)).value += _HEADROOM
    _GUARDED = True
    return True
