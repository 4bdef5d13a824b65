"""The one place the Curvewright version is written."""

__version__ = "0.1.0"
