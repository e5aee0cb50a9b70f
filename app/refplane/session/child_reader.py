"""Read one sweep file in a separate Python process: ``python -m refplane.session.child_reader IN OUT``.

The window's loader runs this for large files. On success it writes the sweep's arrays and
labels to OUT (a NumPy ``.npz``) and exits 0; on a bad file it prints the reader's one-line
message on stderr and exits 2. It imports no Qt.
"""

from __future__ import annotations

import sys


def save(sweep, out: str) -> None:
    """Write a sweep's content to ``out`` (.npz) for :func:`load`."""
    import numpy as np

    with open(out, "wb") as handle:
        np.savez(handle, freq_hz=sweep.freq_hz, s=sweep.s, z0_ohm=sweep.z0_ohm,
                 name=np.array(sweep.name), source=np.array(sweep.source or ""),
                 comments=np.array("\n".join(sweep.comments)))


def load(path: str):
    """Rebuild the sweep written by :func:`save`."""
    import numpy as np

    from refplane.analysis.sweep import Sweep

    with np.load(path, allow_pickle=False) as data:
        return Sweep(freq_hz=data["freq_hz"], s=data["s"], z0_ohm=data["z0_ohm"], name=str(data["name"]),
                     source=str(data["source"]) or None, comments=tuple(str(data["comments"]).split("\n")) if str(data["comments"]) else ())


def main(argv: list[str]) -> int:
    from refplane.session.jobs import read_one

    if len(argv) != 2:
        print("usage: python -m refplane.session.child_reader IN OUT", file=sys.stderr)
        return 2
    status, payload = read_one(argv[0])
    if status != "ok":
        print(payload, file=sys.stderr)
        return 2
    save(payload, argv[1])
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
