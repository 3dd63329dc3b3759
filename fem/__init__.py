"""Quaver: natural frequencies, mode shapes and static/dynamic response of 3D beam and truss structures."""

__version__ = "0.1.0"
__all__ = ["__version__"]
