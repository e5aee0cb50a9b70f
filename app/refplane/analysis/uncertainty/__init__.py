"""Uncertainty of every reading: the residual-term model, its sources, and how it is propagated.

Modules
-------
residual    the residual error terms D, T, M of a corrected reflection measurement
noise       trace noise from the sweep itself (second differences) or from repeated sweeps
propagate   linear propagation (sensitivities, a 2 × 2 covariance of Γ) and Monte Carlo
reading     every source of one reading put together: ``uncertain_points``
calprop     residual terms propagated from a calibration made in Refplane
fitunc      fitted circuit parameters: statistical plus systematic (refitting draws)
doctor      the calibration doctor: plain findings and a verdict
export      uncertainties written beside a corrected Touchstone file

Nothing is imported here, so ``import refplane.analysis.uncertainty`` stays cheap.
"""
