"""Refplane: Smith chart impedance analysis for saved network-analyzer sweeps."""

__version__ = "0.1.0"
