"""The immutable sweep: frequencies, S-parameters, reference impedances and where they came from."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numpy as np

from refplane.analysis.errors import AnalysisError


def _frozen(array: np.ndarray) -> np.ndarray:
    # The sweep takes ownership rather than copying: readers hand over arrays of tens of
    # megabytes, and a copy would double the peak memory of opening a file.
    array.setflags(write=False)
    return array


@dataclass(frozen=True, eq=False)
class Sweep:
    """One saved network-analyzer sweep, held in SI units and never changed in place.

    Parameters
    ----------
    freq_hz : ndarray of float64, shape (n,)
        Frequencies in hertz, finite and strictly increasing.
    s : ndarray of complex128, shape (n, p, p)
        Scattering parameters; ``s[k, i, j]`` is S_(i+1)(j+1) at ``freq_hz[k]``.
    z0_ohm : ndarray of complex128, shape (p,)
        Reference impedance of each port (a scalar is broadcast to every port).
    name : str
        A short label for lists and legends (by default the file's stem).
    source : str or None
        The path the sweep was read from, if any.
    comments : tuple of str
        The file's comment lines, without their comment marker, in order.

    Notes
    -----
    Arrays are stored read-only (arrays passed in are taken over and made read-only, not
    copied), so a sweep can be shared between the window, the command
    line and worker threads without copying. Use :meth:`replace` for a changed copy.
    """

    freq_hz: np.ndarray
    s: np.ndarray
    z0_ohm: np.ndarray
    name: str = "sweep"
    source: str | None = None
    comments: tuple[str, ...] = field(default_factory=tuple)

    def __post_init__(self) -> None:
        freq = np.asarray(self.freq_hz, dtype=np.float64)
        s = np.asarray(self.s, dtype=np.complex128)
        if freq.ndim != 1 or freq.size == 0:
            raise AnalysisError("a sweep needs a one-dimensional, non-empty list of frequencies")
        if s.ndim == 1:
            s = s.reshape(-1, 1, 1)
        if s.ndim != 3 or s.shape[1] != s.shape[2] or s.shape[0] != freq.size:
            raise AnalysisError(
                f"S-parameters of shape {s.shape} do not fit {freq.size} frequencies "
                "(expected points × ports × ports)")
        if not np.all(np.isfinite(freq)):
            raise AnalysisError("a frequency is not a finite number")
        if freq.size > 1 and not np.all(np.diff(freq) > 0):
            k = int(np.argmax(~(np.diff(freq) > 0)))
            raise AnalysisError(
                f"frequencies must increase strictly; point {k + 2} ({freq[k + 1]:g} Hz) "
                f"does not exceed point {k + 1} ({freq[k]:g} Hz)")
        if freq[0] < 0:
            raise AnalysisError("frequencies must not be negative")
        if not np.all(np.isfinite(s)):
            k = int(np.argmax(~np.isfinite(s).reshape(s.shape[0], -1).all(axis=1)))
            raise AnalysisError(f"S-parameters at point {k + 1} ({freq[k]:g} Hz) are not finite numbers")
        z0 = np.asarray(self.z0_ohm, dtype=np.complex128)
        if z0.ndim == 0:
            z0 = np.full(s.shape[1], complex(z0))
        if z0.shape != (s.shape[1],):
            raise AnalysisError(f"{z0.size} reference impedances given for a {s.shape[1]}-port sweep")
        if not np.all(np.isfinite(z0)) or np.any(z0.real <= 0):
            raise AnalysisError("reference impedances must be finite with a positive real part")
        object.__setattr__(self, "freq_hz", _frozen(freq))
        object.__setattr__(self, "s", _frozen(s))
        object.__setattr__(self, "z0_ohm", _frozen(z0))
        object.__setattr__(self, "comments", tuple(str(c) for c in self.comments))

    @property
    def n_ports(self) -> int:
        """Number of ports."""
        return int(self.s.shape[1])

    @property
    def n_points(self) -> int:
        """Number of frequency points."""
        return int(self.freq_hz.size)

    def reflection(self, port: int = 1) -> np.ndarray:
        """Reflection coefficient S_NN of a 1-based ``port`` (a read-only view)."""
        self.check_port(port)
        return self.s[:, port - 1, port - 1]

    def check_port(self, port: int) -> None:
        """Raise :class:`AnalysisError` unless ``port`` is a 1-based port of this sweep."""
        if not isinstance(port, (int, np.integer)) or not 1 <= port <= self.n_ports:
            raise AnalysisError(f"port {port} does not exist; this sweep has {self.n_ports} port(s)")

    def replace(self, **changes) -> "Sweep":
        """A copy with some fields changed (validated afresh)."""
        return dataclasses.replace(self, **changes)

    def to_network(self):
        """This sweep as a scikit-rf ``Network`` (scikit-rf is imported only here).

        Frequencies in hertz, S as points × ports × ports, one reference impedance per port
        (repeated at every frequency), the name, and the comments joined by newlines.

        Examples
        --------
        >>> import numpy as np
        >>> net = Sweep(np.array([1e6, 2e6]), np.array([0.1, 0.2]), 50.0).to_network()
        >>> net.s.shape, float(net.f[1])
        ((2, 1, 1), 2000000.0)
        """
        import skrf

        freq = skrf.Frequency.from_f(np.array(self.freq_hz), unit="Hz")
        z0 = np.broadcast_to(np.array(self.z0_ohm), (self.n_points, self.n_ports)).copy()
        net = skrf.Network(frequency=freq, s=np.array(self.s), z0=z0, name=self.name)
        if self.comments:
            net.comments = "\n".join(self.comments)
        return net

    @classmethod
    def from_network(cls, network, *, name: str | None = None, source: str | None = None) -> "Sweep":
        """A sweep from a scikit-rf ``Network`` (anything with ``f``, ``s`` and ``z0``).

        Raises
        ------
        AnalysisError
            When a port's reference impedance changes with frequency (a sweep keeps one
            reference impedance per port), or the network's values are not a valid sweep.
        """
        s = np.array(network.s, dtype=np.complex128)
        z0 = np.array(network.z0, dtype=np.complex128)
        if z0.ndim == 2:
            if not np.allclose(z0, z0[:1], rtol=1e-12, atol=0.0):
                raise AnalysisError("the network's reference impedance changes with frequency; "
                                    "a sweep keeps one reference impedance per port (renormalise it first)")
            z0 = z0[0]
        comments = tuple(line for line in str(getattr(network, "comments", "") or "").splitlines() if line.strip())
        label = name if name is not None else (getattr(network, "name", None) or "sweep")
        return cls(np.array(network.f, dtype=np.float64), s, z0, name=str(label), source=source, comments=comments)
