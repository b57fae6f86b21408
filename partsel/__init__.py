"""partsel: choose capacitors and inductors by how they behave across frequency."""

__version__ = "0.1.0"
