"""figspec from a notebook: a spec with DataFrames instead of files gives the same tables as
the files do, and the figure on request."""

import pandas as pd

from figspec import pipeline
from figspec.notebook import tables
from figspec.output.files import table_bytes

from helpers import SMALL_SPEC, SPECS, write_spec


def test_dataframes_give_the_same_tables_as_the_files(tmp_path):
    spec = write_spec(tmp_path, SMALL_SPEC)
    from_files = pipeline.compute(pipeline.check(spec)).for_export()
    spikes, trials = pd.read_csv(SPECS / "data" / "spikes.csv"), pd.read_csv(SPECS / "data" / "trials.csv")
    text = SMALL_SPEC.replace("@DATA@", "not/read")                  # the files named are never opened
    result = tables(text, data={"demo": (spikes.sample(frac=1, random_state=1), trials)}, figure=True,
                    folder=tmp_path)
    assert set(result.tables) == set(from_files)
    assert all(table_bytes(result.tables[k]) == table_bytes(from_files[k]) for k in from_files)
    assert result.figure is not None and len(result.figure.axes) == 4
