"""The engine's version, in a module of its own so that any module may import it."""

__all__ = ["__version__"]

__version__ = "0.1.0"
