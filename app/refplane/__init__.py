"""Refplane: Smith chart impedance analysis for saved network-analyzer sweeps.

The stable Python API is :mod:`refplane.api`; its functions are offered here too, loaded on
first use so that ``import refplane`` (and the command line) stays quick::

    import refplane
    sweep = refplane.read("antenna.s1p")
    print(refplane.readings(sweep, at="145MHz")[0]["vswr"])
"""

__version__ = "0.1.0"

# refplane.report is the package that draws reports, so the API's report() is offered here
# as write_report.
_API = frozenset({
    "AnalysisError", "Sweep", "read", "write", "readings", "remove_offsets", "add_offsets",
    "estimate_plane", "calibrate", "load_calibration", "save_calibration", "correct", "fit",
    "limit", "read_limits", "check", "check_files", "write_report", "to_network", "from_network",
})


def __getattr__(name: str):
    if name in _API:
        from refplane import api

        return getattr(api, name)
    raise AttributeError(f"module 'refplane' has no attribute {name!r}")


def __dir__():
    return sorted(set(globals()) | _API)
