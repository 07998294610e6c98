"""Compute layer: pure functions, recording + panel parameters -> tidy table.

No function here sees an Axes. Each table is what its panel draws and what is exported as
the panel's source data, so its columns are documented in the function's docstring.
"""
