"""The desktop window: PySide6 + pyqtgraph views over the session (:mod:`refplane.session`); no RF maths here."""
