"""Survey a spike table and a trial table an author has not described yet: which column holds
the unit, the trial key, the spike time, the level and the stimulus times; which unit the times
are in and which clock they are on. Used by ``figspec draft`` to write a first spec.

Every answer is a :class:`Guess` that says how it was reached and, where the data leave room for
another answer, the question the author should settle. Nothing here decides silently: a guess
the values contradict becomes a question.
"""

from __future__ import annotations

import re

import pandas as pd

from figspec.data.survey_names import (LEVEL_SUFFIXES, ROLE_NAMES, ROLE_WORDS, TIME_SUFFIXES, Guess, Survey, Table,
                                       split_name)
from figspec.data.survey_read import read_any, read_nwb
from figspec.data.survey_times import _guess_clock, _guess_time_unit, _windows
from figspec.errors import DataError, Problem

__all__ = ["Guess", "Survey", "Table", "read_any", "read_nwb", "survey"]


def match_role(columns: list[str], role: str, taken: set[str]) -> list[str]:
    """The columns whose name (without a unit suffix) is one of the role's names, best first."""
    names = ROLE_NAMES[role]
    found = []
    for column in columns:
        if column in taken:
            continue
        base, suffix = split_name(column)
        for rank, name in enumerate(names):
            if base == name:
                found.append((rank, column))
                break
            if role == "level" and suffix is None and base in LEVEL_SUFFIXES:
                found.append((len(names), column))
                break
    return [c for _, c in sorted(found)]


def _numeric(series: pd.Series) -> bool:
    return pd.api.types.is_numeric_dtype(series) and not pd.api.types.is_bool_dtype(series)


def _pick(frame: pd.DataFrame, role: str, taken: set[str], numeric: bool, where: str) -> Guess | None:
    candidates = [c for c in match_role([str(c) for c in frame.columns], role, taken)
                  if not numeric or _numeric(frame[c])]
    if not candidates:
        return None
    chosen = candidates[0]
    taken.add(chosen)
    question = None
    if len(candidates) > 1:
        question = f"{where} has several {role} columns ({', '.join(candidates)}): is {chosen!r} the right one?"
    return Guess(chosen, f"{chosen!r} is named like {ROLE_WORDS[role]}", question)


def survey(spikes: Table, trials: Table | None) -> Survey:
    """Recognise the columns of a spike table (and trial table), then guess the time unit, the
    clock and the windows from the values."""
    out = Survey(spikes, trials)
    sf = spikes.frame
    taken: set[str] = set()
    for role, numeric in (("time", True), ("unit", False), ("trial", False)):
        guess = _pick(sf, role, taken, numeric, "spike table")
        if guess is not None:
            out.spike_columns[role] = guess
    if "time" not in out.spike_columns:
        numeric = [str(c) for c in sf.columns if str(c) not in taken and _numeric(sf[c]) and sf[c].nunique() > len(sf) // 2]
        if not numeric:
            raise DataError(Problem(file=str(spikes.path), message="no column looks like spike times (a column of numbers)",
                                    got=f"columns: {', '.join(map(str, sf.columns))}"))
        out.spike_columns["time"] = Guess(numeric[0], f"{numeric[0]!r} is the spike table's first column of "
                                          "numbers that nearly all differ", "which column holds the spike times?")
    if "unit" not in out.spike_columns:
        raise DataError(Problem(file=str(spikes.path), message="no column looks like the unit (e.g. 'unit', 'cluster', 'neuron')",
                                got=f"columns: {', '.join(map(str, sf.columns))}"))
    unit_column = out.spike_columns["unit"].value
    counts = sf[unit_column].astype(str).str.strip().value_counts(sort=False)
    out.units = sorted(((str(u), int(n)) for u, n in counts.items()), key=lambda un: (-un[1], un[0]))
    _unit_rule(out)
    if trials is None:
        _survey_without_trials(out, taken)
    else:
        _survey_trials(out)
    _guess_time_unit(out)
    _guess_clock(out)
    _windows(out)
    out.questions = [g.question for g in (*out.spike_columns.values(), *out.trial_columns.values(),
                                          out.time_unit, out.clock, out.level_unit, out.trials_per_level,
                                          out.extent_ms) if g and g.question]
    return out


def _survey_without_trials(out: Survey, taken: set[str]) -> None:
    level = _pick(out.spikes.frame, "level", taken, True, "spike table")
    if level is None:
        raise DataError(Problem(file=str(out.spikes.path), message="without a trial table the spike table needs a level column",
                                got=f"columns: {', '.join(map(str, out.spikes.frame.columns))}"))
    out.spike_columns["level"] = level
    _level_unit(out, level.value)
    if "trial" not in out.spike_columns:
        raise DataError(Problem(file=str(out.spikes.path), message="without a trial table the spike table needs a trial column"))
    frame = out.spikes.frame
    trial = out.spike_columns["trial"]
    per = frame.drop_duplicates([level.value, trial.value])
    if per[trial.value].duplicated().any():      # the same trial number at several levels
        out.spike_columns["trial"] = Guess([level.value, trial.value], f"trial numbers in {trial.value!r} recur "
                                           f"at several levels, so the key is ({level.value}, {trial.value})",
                                           trial.question)
    out.levels = sorted((float(v), int(n)) for v, n in per[level.value].value_counts().items())
    most = max(n for _, n in out.levels)
    out.trials_per_level = Guess(most, f"the most trials with a spike at any level is {most}",
                                 "how many trials were presented at each level? A trial without spikes has no "
                                 "row in a spike table, so only you know")


def _survey_trials(out: Survey) -> None:
    tf = out.trials.frame
    taken: set[str] = set()
    for role, numeric in (("trial", False), ("level", True), ("onset", True), ("offset", True),
                          ("start", True), ("stop", True)):
        guess = _pick(tf, role, taken, numeric, "trial table")
        if guess is not None:
            out.trial_columns[role] = guess
    if "level" not in out.trial_columns:
        _level_by_content(out, tf, taken)
    if "level" not in out.trial_columns:
        raise DataError(Problem(file=str(out.trials.path), message="no column looks like the level (e.g. 'level', 'db_spl', "
                                "'contrast', 'intensity')", got=f"columns: {', '.join(map(str, tf.columns))}"))
    level = out.trial_columns["level"].value
    _level_unit(out, level)
    out.levels = sorted((float(v), int(n)) for v, n in tf[level].value_counts().items())
    # other numeric columns named like times are events an author may align to
    for column in map(str, tf.columns):
        if column not in taken and split_name(column)[1] in TIME_SUFFIXES and _numeric(tf[column]):
            name = re.sub(r"[^0-9a-z_]+", "_", split_name(column)[0]).strip("_") or "event"
            out.events[name if name[0].isalpha() else f"e_{name}"] = column
    _trial_key(out)


def _trial_key(out: Survey) -> None:
    """The trial key: the trial column shared by both tables; with the level column too when
    trial numbers restart at each level."""
    tf = out.trials.frame
    trial = out.trial_columns.get("trial")
    spike_trial = out.spike_columns.get("trial")
    if trial is None or spike_trial is None:
        if trial is not None and spike_trial is None:
            out.trial_columns["trial"] = Guess(trial.value, trial.how + "; the spike table has no trial column, "
                                               "so spikes are assigned to trials by time")
        return
    level = out.trial_columns["level"].value
    if tf[trial.value].duplicated().any():
        sf = out.spikes.frame
        if not tf.duplicated([level, trial.value]).any() and level in sf.columns:
            how = (f"trial numbers in {trial.value!r} repeat across levels but not within one, so the key is "
                   f"({level}, {trial.value})")
            out.trial_columns["trial"] = Guess([level, trial.value], how, trial.question)
            out.spike_columns["trial"] = Guess([level, spike_trial.value], how, spike_trial.question)
            return
        out.trial_columns["trial"] = Guess(trial.value, trial.how, f"trial numbers in {trial.value!r} repeat "
                                           "and no level column tells them apart in the spike table: which "
                                           "columns identify a trial?")


def _level_unit(out: Survey, column: str) -> None:
    suffix = split_name(column)[1]
    base = split_name(column)[0]
    if base in ("attenuation", "atten"):
        out.level_unit = Guess(LEVEL_SUFFIXES.get(suffix or "", "dB"), f"the level column {column!r} is an attenuation",
                               "an attenuation is higher for quieter sounds: convert it to the level presented "
                               "(e.g. dB SPL), or rows and fits will run the wrong way")
        return
    if suffix in LEVEL_SUFFIXES:
        unit = LEVEL_SUFFIXES[suffix]
        question = "dB SPL, dB attenuation, or another reference?" if unit == "dB" else None
        out.level_unit = Guess(unit, f"the level column's name ends in _{suffix}", question)
    else:
        out.level_unit = Guess("", f"the level column {column!r} does not say its unit",
                               "what unit are the levels in (dB SPL, %, mW/mm²)?")




def _level_by_content(out: Survey, frame: pd.DataFrame, taken: set[str]) -> None:
    """A level column recognised by its values: numbers, a few distinct ones (2 to 40), each
    presented several times, in a column not named like a time."""
    for column in map(str, frame.columns):
        values = frame[column]
        if column in taken or not _numeric(values) or split_name(column)[1] in TIME_SUFFIXES:
            continue
        distinct = values.nunique()
        if 2 <= distinct <= 40 and values.value_counts().min() >= 2:
            taken.add(column)
            out.trial_columns["level"] = Guess(column, f"{column!r} holds {distinct} distinct numbers, each on "
                                               "several trials, as a level does", f"is {column!r} the level varied?")
            return


def _unit_rule(out: Survey) -> None:
    """With a per-unit table that labels units: keep those labelled good (when some are), and
    put the busiest of them first (the busiest unit of all is often a noise cluster)."""
    table = out.spikes.unit_table
    if table is None or table.label is None:
        return
    good = next((label for label, _ in table.labels if label.lower() in ("good", "su", "single", "single_unit")), None)
    if good is None:
        return
    chosen = {unit for unit, label in table.labelled if label == good}
    out.units = [u for u in out.units if u[0] in chosen] + [u for u in out.units if u[0] not in chosen]
    counts = ", ".join(f"{n} {label}" for label, n in table.labels)
    out.keep_units = Guess({table.label: good}, f"{table.path.name} labels units ({counts})",
                           f"keep only the units labelled {good!r}?")
