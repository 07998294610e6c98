"""Spec layer: pydantic models of the TOML, loading, key-to-line mapping and errors."""
