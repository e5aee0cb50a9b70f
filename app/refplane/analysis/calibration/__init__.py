"""Offline calibration: error models solved and applied (:mod:`.solve`), standard definitions
(:mod:`.standards`) and saved error terms (:mod:`.calfile`)."""
