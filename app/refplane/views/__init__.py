"""The desktop window: PySide6 + pyqtgraph views over :mod:`refplane.views.state`; no RF maths here."""
