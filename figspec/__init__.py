"""figspec: reviewable TOML specs for spike raster, rate and level-response figures."""

from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__"]
