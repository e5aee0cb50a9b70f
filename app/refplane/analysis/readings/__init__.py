"""What is read off a sweep: Γ ⇄ Z ⇄ Y and every readout (:mod:`.impedance`), values between
swept points (:mod:`.markers`), the one path to displayed numbers (:mod:`.points`), two-port
impedances, and trace maths."""

from refplane.analysis.readings.points import PointReadings, read_points

__all__ = ["PointReadings", "read_points"]
