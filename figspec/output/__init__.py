"""Output layer: figure files, source data, written atomically and byte-stable."""
