"""Which file columns a source reads, under figspec's canonical names.

Every format maps the same spec keys (``spike_columns``, ``trial_columns``, ``keep.where``) to
the canonical columns described in :mod:`figspec.data.assemble`: ``unit``, ``key0`` ... (the
trial key), ``time``, ``level``, ``onset``, ``offset``, ``start``, ``stop``, ``event:NAME`` and
``where:COLUMN`` (trial-table columns that selection conditions test).
"""

from __future__ import annotations

from figspec.data.table import Table
from figspec.errors import DataError, Loc, Problem, excerpt
from figspec.spec.sources import SourceBase, TableSource

Plan = dict[str, tuple[str, Loc]]   # canonical name -> (column in the file, key path in the spec)


def trial_plan(columns, where: dict, loc: Loc, key: list[str] | None) -> Plan:
    """Trial-table columns: the key (when given), level, stimulus and extent times, events, unit,
    and the columns selection conditions test."""
    plan: Plan = {}
    for i, column in enumerate(key or []):
        plan[f"key{i}"] = (column, loc + ("trial_columns", "trial") + ((i,) if len(key) > 1 else ()))
    plan["level"] = (columns.level, loc + ("trial_columns", "level"))
    for name in ("onset", "offset", "start", "stop", "unit"):
        column = getattr(columns, name, None)
        if column is not None:
            plan[name] = (column, loc + ("trial_columns", name))
    for event, column in columns.events.items():
        plan[f"event:{event}"] = (column, loc + ("trial_columns", "events", event))
    for column in where:
        plan.setdefault(f"where:{column}", (column, loc + ("keep", "where", column)))
    return plan


def column_plan(src: TableSource, loc: Loc) -> tuple[Plan, Plan | None]:
    """(spike table plan, trial table plan or None when the source has no trial table)."""
    sc = src.spike_columns
    spikes: Plan = {"time": (sc.time, loc + ("spike_columns", "time"))}
    if src.assign_spikes == "by_key":
        for i, column in enumerate(sc.trial):
            spikes[f"key{i}"] = (column, loc + ("spike_columns", "trial") + ((i,) if len(sc.trial) > 1 else ()))
    if src.unit_name is None:
        spikes["unit"] = (sc.unit, loc + ("spike_columns", "unit"))
    if src.trials is None:
        spikes["level"] = (sc.level, loc + ("spike_columns", "level"))
        return spikes, None
    return spikes, trial_plan(src.trial_columns, src.keep.where, loc, list(src.trial_columns.trial))


def key_paths(src: SourceBase, loc: Loc, plans: tuple[Plan, Plan | None]) -> dict[str, Loc]:
    """Key path of each canonical column's mapping, for messages about its values."""
    locs: dict[str, Loc] = {}
    for plan in plans:
        locs.update({k: v[1] for k, v in (plan or {}).items()})
    locs.update({f"spikes:{k}": v[1] for k, v in (plans[0] or {}).items()})     # the spike table's own mapping
    for name in ("onset", "offset", "level", "start", "stop", "time", "unit", "key0"):
        locs.setdefault(name, loc)
    return locs


def missing_columns(header: list[str], plan: Plan, where: str) -> list[Problem]:
    """One problem per planned column the file does not have."""
    # a short excerpt of the header: a file named by mistake (a credentials file) is not printed;
    # real column names are short, so a long field is described, not shown
    shown = excerpt(", ".join(excerpt(h, 32) if len(h) <= 32 else f"<a field of {len(h)} characters>"
                              for h in header[:12]) + (" ..." if len(header) > 12 else ""), 200)
    return [Problem(f"column {column!r} not found in {where}", loc, f"columns: {shown}")
            for column, loc in plan.values() if column not in header]


def rename(frame, plan: Plan, where: str) -> Table:
    """The planned columns of ``frame`` (a Table or DataFrame) under their canonical names (a
    column may serve twice, e.g. a level column that is also part of the trial key)."""
    problems = missing_columns([str(c) for c in frame.columns], plan, where)
    if problems:
        raise DataError(problems)
    return Table({canonical: frame[column] for canonical, (column, _) in plan.items()})
