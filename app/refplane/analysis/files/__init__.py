"""Sweep files: the Touchstone reader and writer, CSV, choosing the reader, atomic writes."""
