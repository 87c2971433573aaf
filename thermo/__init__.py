"""Equilibrium core of the reformer operating-window explorer (no UI imports)."""

from __future__ import annotations

__version__ = "0.1.0"
