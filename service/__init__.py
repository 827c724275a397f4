"""Pellet effectiveness service: effectiveness factors and diagnostics for porous catalyst pellets."""

from .app import create_app

__all__ = ["create_app"]
