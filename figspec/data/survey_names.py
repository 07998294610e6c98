"""What ``figspec draft``'s survey works with: the names each column role is recognised by (and
the unit suffixes of column names), a :class:`Guess` (an answer, how it was reached, the question
it leaves), the tables as read, and the :class:`Survey` that collects the answers."""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import pandas as pd

# Names (lower case, without a unit suffix) each role is recognised by, most specific first.
ROLE_NAMES: dict[str, tuple[str, ...]] = {
    "unit": ("unit", "unit_id", "unitid", "unit_name", "cluster", "cluster_id", "clu", "neuron", "neuron_id",
             "cell", "cell_id", "single_unit", "su"),
    "trial": ("trial", "trial_id", "trialid", "trial_number", "trial_no", "trial_num", "trial_index",
              "trial_in_level", "trial_in_condition", "repetition", "rep", "repeat", "sweep", "presentation"),
    "time": ("time", "spike_time", "spike_times", "spiketime", "timestamp", "timestamps", "t", "ts", "spike_t",
             "spike_sample", "spike_samples", "sample", "samples", "sample_index", "spike_index", "spike_frame"),
    "level": ("level", "sound_level", "stim_level", "stimulus_level", "intensity", "db", "db_spl", "spl",
              "contrast", "irradiance", "luminance", "amplitude", "amp", "ampl", "stim_amp", "stim_amplitude",
              "current", "power", "voltage", "volume", "loudness", "attenuation", "atten"),
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


LEVEL_SUFFIXES = {"db": "dB", "dbspl": "dB SPL", "pct": "%", "percent": "%", "mw": "mW", "uw": "µW", "ua": "µA",
                  "na": "nA", "um": "µm", "mv": "mV", "v": "V"}
SAMPLE_WORDS = ("sample", "samples", "frame", "index")       # a time column counted in samples
COMMON_RATE_HZ = 30_000   # common practice for extracellular probes (a guess the draft asks about, never a rule)


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
    format: str                # csv | parquet | nwb | sample_arrays
    frame: pd.DataFrame
    delimiter: str = ","
    unit_names: str | None = None   # NWB: the units-table column of unit names (None: the ids)
    unit_table: "UnitTableFound | None" = None


@dataclass(frozen=True)
class UnitTableFound:
    """A per-unit table beside the spikes: its file, id column, and label column with its values."""

    path: Path
    id: str
    label: str | None = None
    labels: tuple[tuple[str, int], ...] = ()          # (label, units), most first
    labelled: tuple[tuple[str, str], ...] = ()        # (unit id, label) of every row


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
    sampling_rate_hz: Guess | None = None     # times in samples: the recording's rate
    trial_time_unit: Guess | None = None      # times in samples: the unit of the trial table's times
    keep_units: Guess | None = None           # a unit table's label that chooses the units
    questions: list[str] = field(default_factory=list)


def split_name(column: str) -> tuple[str, str | None]:
    """(name without a unit suffix, the suffix) of a column name, lower case: ``Onset_ms`` ->
    ``("onset", "ms")``, ``time (s)`` -> ``("time", "s")``."""
    name = re.sub(r"[^0-9a-z]+", "_", column.strip().lower()).strip("_")
    parts = name.split("_")
    if len(parts) > 1 and parts[-1] in TIME_SUFFIXES | LEVEL_SUFFIXES:
        return "_".join(parts[:-1]), parts[-1]
    return name, None
