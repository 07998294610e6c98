"""Draw layer: (axes, computed table, style) -> artists. Never reads data or recomputes."""
