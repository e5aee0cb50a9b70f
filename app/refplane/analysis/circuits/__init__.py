"""Equivalent circuits: the two-terminal models (:mod:`.models`) and fitting them (:mod:`.fitting`)."""
