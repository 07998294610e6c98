"""Data layer: sources (CSV now; Parquet and NWB later) -> one canonical :class:`Recording`."""
