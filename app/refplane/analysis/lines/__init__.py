"""Transmission lines and cables: characterisation from an open and a short, and the time domain.

The line model itself (delay, √f conductor loss with its equal phase, f dielectric loss,
impedance) lives in :mod:`refplane.analysis.lines.deembed`; the plane estimate in :mod:`.plane`.
"""
