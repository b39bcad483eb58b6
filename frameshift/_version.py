"""The version string, in a module of its own so that nothing low imports the package face."""

__all__ = ["__version__"]

__version__ = "0.1.0"
