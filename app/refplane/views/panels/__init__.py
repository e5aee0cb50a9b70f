"""Small panels of the window, one per module; each observes :class:`refplane.session.model.Session`."""
