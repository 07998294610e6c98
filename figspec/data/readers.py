"""Turn a ``[sources.NAME]`` spec into a :class:`Recording`.

The format-specific part is one reader module per format, registered in :data:`READERS`; a
reader returns the canonical spike and trial tables described in :mod:`figspec.data.assemble`,
and everything after that (trials, clocks, alignment, units, selection) is shared.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path
from typing import Callable

from figspec.data import csv_source, nwb_source, parquet_source, read_cache, sample_arrays, unit_table
from figspec.data.assemble import Layout, TrialCounts, assemble
from figspec.data.columns import Plan, column_plan, key_paths, rename, trial_plan
from figspec.data.recording import Recording
from figspec.data.table import Table
from figspec.errors import Loc
from figspec.spec.selection import TrialSelection
from figspec.spec.sources import SampleArraysSource, SourceBase, TableSource

Frames = tuple[Table, "Table | None"]

READERS: dict[str, Callable[..., Frames]] = {
    "csv": csv_source.read,
    "parquet": parquet_source.read,
    "nwb": nwb_source.read,
    "sample_arrays": sample_arrays.read,
}


def widened(src: SourceBase, where_columns: set[str]) -> SourceBase:
    """The source as a reader sees it: its own selection columns and those the panels test
    (read, not applied: each rule is applied where it was written)."""
    where = {**{c: None for c in sorted(where_columns)}, **src.keep.where}
    return src.model_copy(update={"keep": TrialSelection.model_construct(exclude=src.keep.exclude, where=where)})


def plans(src: SourceBase, loc: Loc) -> tuple[Plan, Plan | None]:
    """The columns a table source reads (NWB plans its own)."""
    if isinstance(src, SampleArraysSource):
        return {}, trial_plan(src.trial_columns, src.keep.where, loc, list(src.trial_columns.trial))
    return column_plan(src, loc) if isinstance(src, TableSource) else ({}, None)


def layout(src: SourceBase, where: str, locs: dict, loc: Loc) -> Layout:
    return Layout(where=where, locs=locs, time_unit=src.time_unit, trial_time_unit=src.event_time_unit,
                  sampling_rate_hz=src.sampling_rate_hz, clock=src.time_clock, align=src.align,
                  assign=getattr(src, "assign_spikes", "by_key"), ticks_per_second=src.ticks_per_second,
                  extent_ms=src.extent_ms, keep=src.keep, keep_loc=loc + ("keep",),
                  counts=TrialCounts(getattr(src, "trials_per_level", None), loc + ("trials_per_level",)))


def load_source(src: SourceBase, folder: Path, loc: Loc, units: set[str] | None = None,
                where_columns: set[str] = frozenset(), frames: Frames | None = None) -> Recording:
    """Read one source (or take its frames, as a notebook passes them) and assemble its
    :class:`Recording`.

    Parameters
    ----------
    src : the source spec.
    folder : the folder relative file names are resolved against (the spec's folder).
    loc : key path of the source in the spec, e.g. ``("sources", "midbrain")``.
    units : the units the spec uses (a reader may read only those).
    where_columns : trial-table columns that panels' selection conditions test.
    frames : (spike table, trial table) as DataFrames (or Tables) with the file's own column
        names, instead of reading files.
    """
    reading = widened(src, set(where_columns))
    planned = plans(reading, loc)
    table = meeting = None
    if src.unit_table is not None:
        path = folder / src.unit_files()["units"]
        table = unit_table.read_unit_table(path, src.unit_table.id, loc + ("unit_table",))
        if src.keep_units:
            meeting = unit_table.rows_meeting(table, src.keep_units, path, loc)
            candidates = set(table[src.unit_table.id][meeting].tolist())
            units = candidates if units is None else {u for u in units if u.strip() in candidates}
    if frames is not None:
        spikes = rename(frames[0], planned[0], "the spike table")
        trials = None if frames[1] is None or planned[1] is None else rename(frames[1], planned[1], "the trial table")
    else:
        spikes, trials = read(reading, folder, loc, planned, units)
    if getattr(src, "unit_name", None) is not None:
        spikes = spikes.with_columns({"unit": src.unit_name})
    where = " and ".join(str(folder / path) for role, path in src.files().items() if role != "units") \
        if frames is None else "the data frames"
    rec = assemble(spikes, trials, layout(src, where, key_paths(src, loc, planned), loc))
    if table is not None:
        ids = table[src.unit_table.id].tolist()
        rec = replace(rec, unit_properties={column: dict(zip(ids, values.tolist())) for column, values in table.items()
                                            if column != src.unit_table.id})
    if meeting is not None:
        choice = unit_table.choose(table[src.unit_table.id], meeting, src.keep_units, list(rec.all_units),
                                   folder / src.unit_files()["units"], loc, src.unit_table.id)
        rec = rec.keep_units(choice.kept, choice)
    return rec


def read(src: SourceBase, folder: Path, loc: Loc, planned: tuple[Plan, Plan | None], units: set[str] | None) -> Frames:
    """The source's canonical tables from its reader, or, during a build where other specs read
    the same files, from the read cache (:mod:`figspec.data.read_cache`), then cut to ``units``."""
    paths = [folder / path for role, path in src.files().items() if role in ("spikes", "trials")]
    if not read_cache.applies(src.format, paths):
        return READERS[src.format](src, folder, loc, planned, units)
    description = {"format": src.format, "plans": planned,
                   "source": src.model_dump(mode="json", exclude={"keep", "keep_units", "unit_table"})}
    spikes, trials = read_cache.cached(description, paths, lambda: READERS[src.format](src, folder, loc, planned, None))
    if units is not None and planned[1] is not None and getattr(src, "unit_name", None) is None:
        spikes = read_cache.keep_units(spikes, units)
    return spikes, trials
