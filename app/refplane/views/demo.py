"""Where the bundled demo sweep is found.

Installed packages carry the demo files in ``refplane/demo/`` (package data); a source
checkout has them in ``sample_sweeps/`` at the top of the repository. Change
:data:`DEMO_SWEEP` to open a different demo file.
"""

from __future__ import annotations

from pathlib import Path

#: The file the window opens when started without files.
DEMO_SWEEP = "leaded_resistor_75ohm.s1p"
#: Markers placed on the demo sweep when it opens (Hz): UHF TV, where its leads show.
DEMO_MARKERS_HZ = (470e6,)


def demo_folders() -> list[Path]:
    """Folders searched for demo files, in order."""
    package = Path(__file__).resolve().parents[1]  # …/refplane
    return [package / "demo", package.parents[1] / "sample_sweeps"]


def demo_path(name: str = DEMO_SWEEP) -> Path | None:
    """The demo file's path, or None when it is not installed."""
    for folder in demo_folders():
        candidate = folder / name
        if candidate.is_file():
            return candidate
    return None
