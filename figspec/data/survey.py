"""Survey a spike table and a trial table an author has not described yet: which column holds
the unit, the trial key, the spike time, the level and the stimulus times; which unit the times
are in and which clock they are on. Used by ``figspec draft`` to write a first spec.

Every answer is a :class:`Guess` that says how it was reached and, where the data leave room for
another answer, the question the author should settle. Nothing here decides silently: a guess
the values contradict becomes a question.
"""

from __future__ import annotations

import csv
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from figspec.data.csv_source import DELIMITER_NAMES, check_file
from figspec.errors import DataError, Problem
from figspec.optional import require

# Names (lower case, without a unit suffix) each role is recognised by, most specific first.
ROLE_NAMES: dict[str, tuple[str, ...]] = {
    "unit": ("unit", "unit_id", "unitid", "unit_name", "cluster", "cluster_id", "clu", "neuron", "neuron_id",
             "cell", "cell_id", "single_unit", "su"),
    "trial": ("trial", "trial_id", "trialid", "trial_number", "trial_no", "trial_num", "trial_index",
              "trial_in_level", "trial_in_condition", "repetition", "rep", "repeat", "sweep", "presentation"),
    "time": ("time", "spike_time", "spike_times", "spiketime", "timestamp", "timestamps", "t", "ts", "spike_t"),
    "level": ("level", "sound_level", "stim_level", "stimulus_level", "intensity", "db", "db_spl", "spl",
              "contrast", "irradiance", "luminance", "amplitude", "current", "power", "attenuation", "atten"),
    "onset": ("onset", "stim_onset", "stimulus_onset", "stim_on", "onset_time", "stim_start", "stimulus_start",
              "on"),
    "offset": ("offset", "stim_offset", "stimulus_offset", "stim_off", "offset_time", "stim_stop", "stim_end",
               "stimulus_stop", "stimulus_end", "off"),
    "start": ("start", "trial_start", "start_time", "t_start", "begin", "trial_begin"),
    "stop": ("stop", "trial_stop", "stop_time", "t_stop", "end", "trial_end", "end_time"),
}
ROLE_WORDS = {"unit": "a unit name", "trial": "a trial number", "time": "spike times", "level": "the level",
              "onset": "stimulus onsets", "offset": "stimulus offsets", "start": "trial starts",
              "stop": "trial stops"}
# unit suffixes of a column name, and what they say
TIME_SUFFIXES = {"s": "s", "sec": "s", "secs": "s", "seconds": "s", "ms": "ms", "msec": "ms", "msecs": "ms",
                 "millis": "ms", "us": "us", "usec": "us"}
LEVEL_SUFFIXES = {"db": "dB", "dbspl": "dB SPL", "pct": "%", "percent": "%", "mw": "mW", "ua": "µA", "na": "nA"}


@dataclass(frozen=True)
class Guess:
    """One answer: ``value`` (a column name, a list of them, a unit, a clock …), ``how`` it was
    reached, and a ``question`` when the data allow another answer."""

    value: Any
    how: str
    question: str | None = None


@dataclass(frozen=True)
class Table:
    """A table as read for the survey: its file, format, delimiter and every column."""

    path: Path
    format: str                # csv | parquet | nwb
    frame: pd.DataFrame
    delimiter: str = ","
    unit_names: str | None = None   # NWB: the units-table column of unit names (None: the ids)


@dataclass
class Survey:
    """Everything ``figspec draft`` needs to write a spec (each role a :class:`Guess`)."""

    spikes: Table
    trials: Table | None
    spike_columns: dict[str, Guess] = field(default_factory=dict)
    trial_columns: dict[str, Guess] = field(default_factory=dict)
    events: dict[str, str] = field(default_factory=dict)
    time_unit: Guess | None = None
    clock: Guess | None = None
    level_unit: Guess | None = None
    units: list[tuple[str, int]] = field(default_factory=list)          # (unit, spikes), most spikes first
    levels: list[tuple[float, int]] = field(default_factory=list)       # (level, trials)
    stimulus_ms: float | None = None          # median stimulus duration
    before_ms: float | None = None            # recorded time before onset in the shortest trial
    after_ms: float | None = None             # recorded time after onset in the shortest trial
    trials_per_level: Guess | None = None     # no trial table: trials presented per level
    extent_ms: Guess | None = None            # no trial times: what was recorded around the onset
    questions: list[str] = field(default_factory=list)


# ---------------------------------------------------------------- reading

def sniff_delimiter(path: Path) -> str:
    """The delimiter of a text table, from its first lines (comma when unsure)."""
    with open(path, encoding="utf-8-sig", newline="") as handle:
        sample = handle.read(1 << 14)
    try:
        return csv.Sniffer().sniff(sample, delimiters="".join(DELIMITER_NAMES)).delimiter
    except csv.Error:
        return ","


def read_any(path: Path) -> Table:
    """Read every column of a CSV (any delimiter) or Parquet file, by its content."""
    path = Path(path)
    check_file(path, ())
    with open(path, "rb") as handle:
        magic = handle.read(8)
    if magic[:4] == b"PAR1":
        import pyarrow.parquet as pq

        return Table(path, "parquet", pq.read_table(path).to_pandas())
    if magic.startswith(b"\x89HDF"):
        raise DataError(Problem(file=str(path), message="an HDF5 file: give an NWB file alone (figspec draft FILE.nwb)"))
    try:
        delimiter = sniff_delimiter(path)
        frame = pd.read_csv(path, sep=delimiter, encoding="utf-8-sig")
    except (UnicodeDecodeError, pd.errors.ParserError, ValueError) as err:
        raise DataError(Problem(f"cannot read this as a CSV or Parquet table ({type(err).__name__})", file=str(path))) from None
    if frame.empty:
        raise DataError(Problem(file=str(path), message="no rows"))
    return Table(path, "csv", frame, delimiter)


def read_nwb(path: Path) -> tuple[Table, Table]:
    """The units table (one row per spike: unit, spike_times) and the trials table of an NWB
    file, under the NWB standard's column names."""
    pynwb = require("pynwb", f"reading {Path(path).name} (NWB)")
    check_file(Path(path), ())
    with pynwb.NWBHDF5IO(str(path), "r") as io:
        nwb = io.read()
        if nwb.units is None or nwb.trials is None:
            raise DataError(Problem(file=str(path), message="an NWB file needs a units table and a trials table"))
        ends = np.asarray(nwb.units.spike_times_index.data[:]).astype(np.int64)
        named = next((c for c in ("unit_name", "name", "label") if c in nwb.units.colnames), None)
        names = nwb.units[named].data[:] if named else nwb.units.id[:]
        spikes = pd.DataFrame({"unit": np.repeat(np.asarray([str(n) for n in names], dtype=object),
                                                 np.diff(np.r_[0, ends])),
                               "spike_times": np.asarray(nwb.units.spike_times.data[:], dtype=float)})
        trials = pd.DataFrame({c: np.asarray(nwb.trials[c].data[:]) for c in nwb.trials.colnames})
    return Table(Path(path), "nwb", spikes, unit_names=named), Table(Path(path), "nwb", trials)


# ---------------------------------------------------------------- recognising columns

def _split_name(column: str) -> tuple[str, str | None]:
    """(name without a unit suffix, the suffix) of a column name, lower case: ``Onset_ms`` ->
    ``("onset", "ms")``, ``time (s)`` -> ``("time", "s")``."""
    name = re.sub(r"[^0-9a-z]+", "_", column.strip().lower()).strip("_")
    parts = name.split("_")
    if len(parts) > 1 and parts[-1] in TIME_SUFFIXES | LEVEL_SUFFIXES:
        return "_".join(parts[:-1]), parts[-1]
    return name, None


def match_role(columns: list[str], role: str, taken: set[str]) -> list[str]:
    """The columns whose name (without a unit suffix) is one of the role's names, best first."""
    names = ROLE_NAMES[role]
    found = []
    for column in columns:
        if column in taken:
            continue
        base, suffix = _split_name(column)
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


def _time_unit_from_names(columns: list[str]) -> tuple[str | None, str | None]:
    for column in columns:
        unit = TIME_SUFFIXES.get(_split_name(column)[1] or "")
        if unit:
            return unit, column
    return None, None


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
        numeric = [str(c) for c in sf.columns if _numeric(sf[c]) and pd.api.types.is_float_dtype(sf[c])]
        if not numeric:
            raise DataError(Problem(file=str(spikes.path), message="no column looks like spike times (a column of numbers)",
                                    got=f"columns: {', '.join(map(str, sf.columns))}"))
        out.spike_columns["time"] = Guess(numeric[0], f"{numeric[0]!r} is the spike table's first column of "
                                          "decimal numbers", "which column holds the spike times?")
    if "unit" not in out.spike_columns:
        raise DataError(Problem(file=str(spikes.path), message="no column looks like the unit (e.g. 'unit', 'cluster', 'neuron')",
                                got=f"columns: {', '.join(map(str, sf.columns))}"))
    unit_column = out.spike_columns["unit"].value
    counts = sf[unit_column].astype(str).value_counts(sort=False)
    out.units = sorted(((str(u), int(n)) for u, n in counts.items()), key=lambda un: (-un[1], un[0]))
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
        raise DataError(Problem(file=str(out.trials.path), message="no column looks like the level (e.g. 'level', 'db_spl', "
                                "'contrast', 'intensity')", got=f"columns: {', '.join(map(str, tf.columns))}"))
    level = out.trial_columns["level"].value
    _level_unit(out, level)
    out.levels = sorted((float(v), int(n)) for v, n in tf[level].value_counts().items())
    # other numeric columns named like times are events an author may align to
    for column in map(str, tf.columns):
        if column not in taken and _split_name(column)[1] in TIME_SUFFIXES and _numeric(tf[column]):
            name = re.sub(r"[^0-9a-z_]+", "_", _split_name(column)[0]).strip("_") or "event"
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
    suffix = _split_name(column)[1]
    base = _split_name(column)[0]
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


def _column(out: Survey, role: str) -> np.ndarray | None:
    guess = out.trial_columns.get(role)
    if guess is None or out.trials is None:
        return None
    return out.trials.frame[guess.value].to_numpy(dtype=float)


def _typical_trial(out: Survey) -> tuple[float | None, str]:
    """The median length of a trial in file units, and what it was measured from: start to
    stop where both are given, else the stimulus (onset to offset), else the stop on a clock
    that starts each trial at 0."""
    start, stop, onset, offset = (_column(out, r) for r in ("start", "stop", "onset", "offset"))
    if start is not None and stop is not None:
        return float(np.nanmedian(stop - start)), "the median trial (start to stop)"
    if onset is not None and offset is not None:
        return float(np.nanmedian(offset - onset)), "the median stimulus (onset to offset)"
    if stop is not None and onset is not None and np.nanmax(onset) < np.nanmedian(stop):
        return float(np.nanmedian(stop)), "the median trial (0 to stop)"
    return None, ""


def _guess_time_unit(out: Survey) -> None:
    names = [out.spike_columns["time"].value] + [g.value for r, g in out.trial_columns.items()
                                                  if r in ("onset", "offset", "start", "stop")]
    unit, column = _time_unit_from_names(names)
    if unit == "us":
        out.time_unit = Guess("ms", f"{column!r} is in µs, which figspec does not read",
                              "convert the times to ms or s: figspec reads time_unit 's' or 'ms'")
        return
    length, what = _typical_trial(out)
    if unit:
        question = None
        if length is not None and ((unit == "s" and length > 60) or (unit == "ms" and length < 1)):
            question = f"{what} lasts {length:.3g} {unit}: are the times really in {unit}?"
        out.time_unit = Guess(unit, f"the column name {column!r} ends in _{_split_name(column)[1]}", question)
        return
    if length is None:     # no trial times: look at the spread of the spike times
        times = out.spikes.frame[out.spike_columns["time"].value].to_numpy(dtype=float)
        length, what = float(np.nanpercentile(times, 99) - np.nanpercentile(times, 1)), "the spike times' range"
    # a trial (or the spikes' spread) of over 20 units is taken as ms; a stimulus of over 10
    # (a 10-s burst is rare, a 10-ms one common); under 1 as s either way; between: a question
    if length > (10 if "stimulus" in what else 20):
        out.time_unit = Guess("ms", f"{what} is {length:.3g} long: {length:.3g} s would be long, "
                                    f"{length:.3g} ms is usual")
    elif length < 1:
        out.time_unit = Guess("s", f"{what} is {length:.3g} long: {length:.3g} ms would be short, {length:.3g} s is usual")
    else:
        out.time_unit = Guess("s", f"{what} is {length:.3g} long, which could be s or ms",
                              f"are the times in s or in ms? ({what} lasts {length:.3g})")


def _guess_clock(out: Survey) -> None:
    times = out.spikes.frame[out.spike_columns["time"].value].to_numpy(dtype=float)
    onset, start = _column(out, "onset"), _column(out, "start")
    length, _ = _typical_trial(out)
    if out.trials is None or onset is None:
        how = ("there is no trial table" if out.trials is None else "the trial table gives no onset")
        negative = bool((times < 0).any())
        out.clock = Guess("aligned", f"{how}; spike times " + ("include negative values, so they are relative to "
                          "the stimulus onset" if negative else "are taken as relative to the stimulus onset"),
                          None if negative else "are the spike times relative to the stimulus onset?")
        return
    if "trial" not in out.spike_columns:
        out.clock = Guess("session", "the spike table has no trial column, so its times are on one clock for "
                                     "the whole recording (assigned to trials by each trial's start and stop)")
        return
    spread = float(np.nanmax(onset) - np.nanmin(onset))
    trial_length = length if length is not None else float(np.nanmedian(onset)) * 2
    if start is not None and np.nanmax(start) > 0 or spread > 2 * trial_length:
        out.clock = Guess("session", f"onsets run from {np.nanmin(onset):.4g} to {np.nanmax(onset):.4g}, "
                                     "longer than one trial: one clock for the whole recording")
    else:
        out.clock = Guess("trial", f"onsets stay within {np.nanmin(onset):.4g}..{np.nanmax(onset):.4g}, less than "
                                   "one trial: each trial's own clock, from its start")


def _round_out(value: float, direction: int) -> float:
    """``value`` (ms) rounded away from zero to a whole 10 ms in ``direction``."""
    return float(np.floor(value / 10) * 10 if direction < 0 else np.ceil(value / 10) * 10)


def _windows(out: Survey) -> None:
    """Median stimulus duration and the recorded time around the onset, in ms."""
    scale = 1000.0 if out.time_unit.value == "s" else 1.0
    onset, offset, start, stop = (_column(out, r) for r in ("onset", "offset", "start", "stop"))
    if onset is not None and offset is not None:
        out.stimulus_ms = float(np.nanmedian(offset - onset)) * scale
    if onset is None and stop is None:         # no trial times: the spikes' own range
        times = out.spikes.frame[out.spike_columns["time"].value].to_numpy(dtype=float) * scale
        lo, hi = float(np.nanmin(times)), float(np.nanmax(times))
        out.before_ms, out.after_ms = max(0.0, -lo), max(0.0, hi)
        out.extent_ms = Guess([_round_out(lo, -1), _round_out(hi, 1)], f"the spike times run from {lo:.4g} to "
                              f"{hi:.4g} ms", "what was recorded around each onset (ms)? Windows must stay inside it")
    if onset is not None:
        first = start if start is not None else (np.zeros_like(onset) if out.clock.value == "trial" else None)
        if first is not None:
            out.before_ms = float(np.nanmin(onset - first)) * scale
        if stop is not None:
            out.after_ms = float(np.nanmin(stop - onset)) * scale
