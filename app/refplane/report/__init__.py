"""Reports of sweeps, limit results and batches: self-contained HTML (pictures inline as SVG)
or PDF drawn by Qt's own PDF writer. See :mod:`refplane.report.build`."""
