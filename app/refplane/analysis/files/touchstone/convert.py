"""Numbers to S-parameters: element order, data format (RI, MA, DB), and Y/Z/G/H to S."""

from __future__ import annotations

import math

import numpy as np

from refplane.analysis.errors import SweepFileError
from refplane.analysis.files.touchstone.header import Header

def _element_order(head: Header) -> tuple[list[tuple[int, int]], bool]:
    """File order of matrix elements as (row, column), and whether to mirror (Lower/Upper)."""
    n = head.ports
    # Lower and Upper list a triangle (S11, S21, S22 or S11, S12, S22 for a two-port);
    # [Two-Port Data Order] applies to Full matrices only (Touchstone 2.0 specification).
    if head.version == 2 and head.matrix == "lower":
        return [(i, j) for i in range(n) for j in range(i + 1)], True
    if head.version == 2 and head.matrix == "upper":
        return [(i, j) for i in range(n) for j in range(i, n)], True
    if n == 2 and (head.version == 1 or head.order_21_12):
        return [(0, 0), (1, 0), (0, 1), (1, 1)], False
    return [(i, j) for i in range(n) for j in range(n)], False


def to_s(head: Header, values: np.ndarray, first_point: int = 0) -> np.ndarray:
    """S-parameters from the (points × numbers) table, converting the data format and kind.

    ``first_point``: the index in the file of the table's first point (for messages).
    """
    n = head.ports
    order, mirror = _element_order(head)
    m = np.empty((values.shape[0], n, n), dtype=np.complex128)
    if head.fmt == "ri" and not mirror:
        # Real and imaginary parts go straight into place: one gather, no temporaries.
        columns = np.empty(2 * n * n, dtype=np.intp)
        for k, (i, j) in enumerate(order):
            columns[2 * (i * n + j)] = 1 + 2 * k
            columns[2 * (i * n + j) + 1] = 2 + 2 * k
        # mode="clip": the indices are valid, and "raise" would buffer the whole output.
        np.take(values, columns, axis=1, out=m.reshape(-1, n * n).view(np.float64), mode="clip")
        order = []
    for k, (i, j) in enumerate(order):
        a = values[:, 1 + 2 * k]
        b = values[:, 2 + 2 * k]
        if head.fmt == "ri":
            m[:, i, j].real = a
            m[:, i, j].imag = b
        else:
            with np.errstate(over="ignore", invalid="ignore"):
                # A huge dB value overflows to inf here; the caller names its line.
                mag = a if head.fmt == "ma" else 10.0 ** (a / 20.0)
                m[:, i, j].real, m[:, i, j].imag = _polar(mag, b)
        if mirror and i != j:
            m[:, j, i] = m[:, i, j]
    if head.param == "s":
        return m
    try:
        return _network_to_s(m, head.param, head.z0().real, normalised=head.version == 1,
                             first_point=first_point)
    except SweepFileError as exc:
        raise SweepFileError(exc.reason, file=head.file) from None


def _polar(mag: np.ndarray, deg: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Real and imaginary parts of ``mag`` at angle ``deg`` (degrees).

    Both come from one tangent, by the tangent half-angle identities cos θ = (1 − t²)/(1 + t²)
    and sin θ = 2t/(1 + t²) with t = tan(θ/2): a third of the time of a cosine and a sine,
    which numpy evaluates one value at a time. The errors are of the size of those of
    ``cos(radians(deg))``, a few 1e-16 (0° gives exactly 1 and 0, 180° exactly -1), and t²
    cannot overflow: the largest tangent of a double is about 1.6e16.
    """
    # π/360 is half of π/180 exactly, so this is radians(deg) / 2 to the bit.
    t = np.multiply(deg, math.pi / 360)
    np.tan(t, out=t)
    t2 = t * t
    den = t2 + 1.0
    re = np.subtract(1.0, t2, out=t2)
    re /= den
    re *= mag
    im = np.add(t, t, out=t)
    im /= den
    im *= mag
    return re, im


#: For each kind: is each port's independent quantity a current (True) or a voltage?
_INDEPENDENT_IS_CURRENT = {"z": (True, True), "y": (False, False), "h": (True, False),
                           "g": (False, True)}


def _network_to_s(m: np.ndarray, kind: str, z0_ohm: np.ndarray, *, normalised: bool,
                  first_point: int = 0) -> np.ndarray:
    """Convert Z, Y, H or G matrices to S at real reference impedances ``z0_ohm``.

    With power waves a = (V + Z0·I)/(2√Z0), b = (V − Z0·I)/(2√Z0) and the normalised
    v = V/√Z0 = a + b, i = I·√Z0 = a − b, a relation y = M·x between dependent and
    independent quantities becomes (Qy − M·Qx)·b = (M·Px − Py)·a, so S = (Qy − M·Qx)⁻¹(M·Px − Py).
    Version 1 files hold M already normalised to the one reference R.
    """
    n = m.shape[1]
    current = _INDEPENDENT_IS_CURRENT[kind][:n] if kind in ("h", "g") else \
        (_INDEPENDENT_IS_CURRENT[kind][0],) * n
    current = np.array(current)
    root = np.sqrt(z0_ohm.astype(np.float64))
    if not normalised:
        # scale of x_j (independent) and y_i (dependent): i·√Z0 for a current, v/√Z0 for a voltage
        sx = np.where(current, root, 1.0 / root)
        sy = np.where(current, 1.0 / root, root)
        m = m * (sy[:, None] / sx[None, :])
    # independent x: current → a − b (P = 1, Q = −1); voltage → a + b (P = 1, Q = 1)
    qx = np.where(current, -1.0, 1.0)
    qy = -qx  # the dependent quantity is the other one
    eye = np.eye(n)
    lhs = np.diag(qy)[None] - m * qx[None, None, :]
    rhs = m - eye[None]  # M·Px − Py with Px = Py = I
    with np.errstate(all="ignore"):
        try:
            s = np.linalg.solve(lhs, rhs)
        except np.linalg.LinAlgError:
            k = int(np.argmax(~np.isfinite(1.0 / np.linalg.det(lhs))))
            raise SweepFileError(f"the network data of frequency point {first_point + k + 1} "
                                 "cannot be converted to S-parameters (a singular matrix)") \
                from None
    return np.ascontiguousarray(s)



def bad_point(s: np.ndarray) -> int | None:
    """Index of the first point whose S-parameters are not finite (overflow), or None."""
    finite = np.isfinite(s.view(np.float64).reshape(s.shape[0], -1)).all(axis=1)
    if finite.all():
        return None
    return int(np.argmin(finite))
