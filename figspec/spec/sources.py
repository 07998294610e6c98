"""``[sources.NAME]`` models: one per data format, joined in a union tagged by ``format``.

A source model says which files it reads (:meth:`files`, for provenance and messages), how its
columns map to figspec's canonical names, which clock its times are on, which event the trials
are aligned to, how long each trial was recorded, and which trials to keep. ``format`` may be
left out for ``csv``. A new format is one model here, one member of :data:`SOURCE_MODELS`, one
reader module in ``figspec/data/`` and one line in ``figspec.data.readers.READERS``.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal, Union

from pydantic import AfterValidator, Discriminator, Field, Tag, model_validator

from figspec.spec.fields import Frozen, Name, WindowMs
from figspec.spec.selection import Condition, TrialSelection

DEFAULT_FORMAT = "csv"
Columns = Annotated[list[Annotated[str, Field(min_length=1)]], Field(min_length=1, max_length=6)]


def _as_list(value: Any) -> Any:
    return [value] if isinstance(value, str) else value


# one column name, or a list of them (a key of several columns); always a list once validated
ColumnOrColumns = Annotated[Union[Annotated[str, Field(min_length=1)], Columns], AfterValidator(_as_list)]


class SpikeColumns(Frozen):
    """Column names in the spike table (one row per spike). ``trial`` names the trial key: one
    column or several (e.g. ``["level_db", "trial"]`` when trial numbers restart per level)."""

    unit: str = "unit"
    trial: ColumnOrColumns = ["trial"]
    time: str = "time"
    level: str | None = None


class TrialColumns(Frozen):
    """Column names in the trial table (one row per presented trial).

    ``trial`` is the trial key (one or several columns, matching ``spike_columns.trial``);
    ``onset``/``offset`` the stimulus; ``start``/``stop`` the recorded extent of each trial (and,
    on a session clock, the times spikes are assigned by); ``events`` further event times to
    align to (name -> column); ``unit`` is for trials that belong to one unit each.
    """

    trial: ColumnOrColumns = ["trial"]
    level: str = "level"
    onset: str | None = None
    offset: str | None = None
    start: str | None = None
    stop: str | None = None
    events: dict[Name, str] = Field(default_factory=dict)
    unit: str | None = None


TimeUnit = Literal["s", "ms", "samples"]
SamplingRate = Annotated[float, Field(gt=0, le=1e7, description="samples per second of the recording (Hz)")]


class UnitTable(Frozen):
    """A table with one row per unit (a spike sorter's labels and metrics): ``file`` (CSV, a
    ``.tsv`` file tab-separated, or Parquet) and ``id``, its column of unit ids, matched to the
    spike table's unit names."""

    file: str
    id: str = "unit_id"


class SourceBase(Frozen):
    """Keys every format has: the clock and unit of its times, alignment, recorded extent,
    time resolution, which trials to keep, and which units (by a per-unit table)."""

    time_unit: TimeUnit = "s"
    trial_time_unit: TimeUnit | None = None
    sampling_rate_hz: SamplingRate | None = None
    clock: Literal["aligned", "trial", "session"] | None = None
    align: str = "onset"
    extent_ms: WindowMs | None = None
    tick_us: Annotated[float, Field(ge=0.001, le=1000)] = 1.0
    keep: TrialSelection = TrialSelection()
    unit_table: UnitTable | None = None
    keep_units: dict[str, Condition] = Field(default_factory=dict)

    @model_validator(mode="after")
    def _whole_ticks(self) -> "SourceBase":
        per_ms = 1000.0 / self.tick_us
        if abs(per_ms - round(per_ms)) > 1e-9:
            raise ValueError(f"tick_us must divide 1 ms into whole ticks (got {self.tick_us:g} µs)")
        if "samples" in (self.time_unit, self.trial_time_unit) and self.sampling_rate_hz is None:
            raise ValueError("times in samples need the recording's sampling rate: set sampling_rate_hz")
        if self.keep_units and self.unit_table is None:
            raise ValueError("keep_units chooses units by the columns of a per-unit table: set unit_table "
                             "(e.g. unit_table = { file = \"units.tsv\", id = \"unit_id\" })")
        return self

    @property
    def event_time_unit(self) -> str:
        """The unit of the trial table's times: ``trial_time_unit``, else that of the spikes."""
        return self.trial_time_unit or self.time_unit

    def unit_files(self) -> dict[str, str]:
        return {"units": self.unit_table.file} if self.unit_table else {}

    @property
    def ticks_per_second(self) -> int:
        return int(round(1e6 / self.tick_us))

    @property
    def time_clock(self) -> str:
        return self.clock or "aligned"


class TableSource(SourceBase):
    """Keys of every source made of a spike table and (preferably) a trial table."""

    spikes: str
    trials: str | None = None
    spike_columns: SpikeColumns = SpikeColumns()
    trial_columns: TrialColumns = TrialColumns()
    assign_spikes: Literal["by_key", "by_time"] = "by_key"
    trials_per_level: Annotated[int, Field(gt=0)] | dict[str, Annotated[int, Field(gt=0)]] | None = None
    unit_name: str | None = None

    @model_validator(mode="after")
    def _trials_described(self) -> "TableSource":
        tc = self.trial_columns
        if self.trials is not None and self.trials_per_level is not None:
            raise ValueError("give either a trial table (trials) or trials_per_level, not both")
        if tc.offset is not None and tc.onset is None:
            raise ValueError("trial_columns.offset needs trial_columns.onset (offsets are taken relative to it)")
        if self.trials is None and self.spike_columns.level is None:
            raise ValueError("without a trial table the spike table must carry the level: "
                             "set spike_columns.level")
        if self.trials is None and (self.clock not in (None, "aligned") or self.assign_spikes != "by_key"):
            raise ValueError(f"clock = {self.clock!r} needs a trial table (trials) with the trials' times")
        if self.assign_spikes == "by_time" and (self.clock != "session" or (
                (tc.start is None or tc.stop is None) and self.extent_ms is None)):
            raise ValueError("assign_spikes = 'by_time' needs clock = 'session' and either trial_columns.start and "
                             "trial_columns.stop (each trial's start and stop on the session clock) or extent_ms "
                             "(what was recorded of each trial around its alignment event)")
        if self.assign_spikes == "by_key" and self.trials is not None and \
                len(self.spike_columns.trial) != len(tc.trial):
            raise ValueError(f"spike_columns.trial and trial_columns.trial name the same key: give both "
                             f"{len(tc.trial)} column(s) (got {len(self.spike_columns.trial)})")
        if self.align != "onset" and self.align not in tc.events:
            raise ValueError(f"align names an event: 'onset' or one of trial_columns.events "
                             f"({', '.join(tc.events) or 'none given'})")
        aligning = tc.onset is not None or self.align != "onset"
        if self.clock is None and aligning:
            raise ValueError("say which clock the spike and event times are on: clock = 'session' (one clock "
                             "for the whole recording) or 'trial' (each trial's own, from its start)")
        if self.clock in ("trial", "session") and not aligning:
            raise ValueError(f"clock = {self.clock!r} aligns each trial to an event: set trial_columns.onset "
                             "(or align to one of trial_columns.events)")
        if self.clock == "aligned" and aligning:
            raise ValueError("clock = 'aligned' means spike times are already relative to the alignment "
                             "event: leave out trial_columns.onset and align, or choose clock 'session' or 'trial'")
        return self

    @property
    def time_clock(self) -> str:
        """The clock, ``aligned`` when the spec has no alignment column and says none."""
        return self.clock or "aligned"

    def files(self) -> dict[str, str]:
        """The files this source reads, by role (paths as written, relative to the spec)."""
        files = {role: path for role, path in (("spikes", self.spikes), ("trials", self.trials)) if path}
        return {**files, **self.unit_files()}

    @property
    def has_stimulus_window(self) -> bool:
        """Whether the trial table gives each trial's stimulus onset and offset."""
        return self.trials is not None and None not in (self.trial_columns.onset, self.trial_columns.offset)


class CsvSource(TableSource):
    """``format = "csv"`` (the default): delimited text spike and trial tables."""

    format: Literal["csv"] = "csv"
    delimiter: Annotated[str, Field(min_length=1, max_length=1)] = ","


class ParquetSource(TableSource):
    """``format = "parquet"``: spike and trial tables as Apache Parquet files (pyarrow)."""

    format: Literal["parquet"] = "parquet"


class NwbColumns(Frozen):
    """Columns of an NWB file's trials table: ``trial`` is the trial key (default: the table's
    ids); ``start`` and ``stop`` each trial's recorded extent (NWB's own ``start_time`` and
    ``stop_time``; ``stop = ""`` when the source's ``extent_ms`` says what was recorded)."""

    trial: str | None = None
    level: str = "level"
    onset: str | None = None
    offset: str | None = None
    start: str = "start_time"
    stop: str = "stop_time"
    events: dict[Name, str] = Field(default_factory=dict)


class NwbSource(SourceBase):
    """``format = "nwb"``: a Neurodata Without Borders file (pynwb): the units table's spike
    times and the trials table, both in s on the session clock."""

    format: Literal["nwb"]
    file: str
    unit_names: str | None = None
    trial_columns: NwbColumns = NwbColumns()
    clock: Literal["session"] = "session"
    time_unit: Literal["s"] = "s"
    trial_time_unit: Literal["s"] | None = None
    assign_spikes: Literal["by_time"] = "by_time"

    @model_validator(mode="after")
    def _aligned(self) -> "NwbSource":
        if self.align == "onset" and self.trial_columns.onset is None:
            raise ValueError("set trial_columns.onset (the trials table's stimulus onset column) or align "
                             "to one of trial_columns.events")
        if self.align != "onset" and self.align not in self.trial_columns.events:
            raise ValueError("align names an event: 'onset' or one of trial_columns.events")
        if not self.trial_columns.stop and self.extent_ms is None:
            raise ValueError("without a stop column (trial_columns.stop = \"\") set extent_ms: what was "
                             "recorded of each trial around its alignment event")
        return self

    def files(self) -> dict[str, str]:
        return {"nwb": self.file, **self.unit_files()}

    @property
    def has_stimulus_window(self) -> bool:
        return None not in (self.trial_columns.onset, self.trial_columns.offset)


class SampleArraysSource(SourceBase):
    """``format = "sample_arrays"``: a spike sorter's output folder. ``folder`` holds
    ``spike_samples`` (a ``.npy`` array of spike times as whole sample indices on the session
    clock) and ``spike_units`` (a parallel ``.npy`` array of unit ids), optionally a per-unit
    table (``unit_table``, its file relative to the folder); ``sampling_rate_hz`` converts
    samples to time. Trials come from a trial table (``trials``, relative to the spec, times in
    ``trial_time_unit``: s unless said) and spikes are assigned to trials by time."""

    format: Literal["sample_arrays"]
    folder: str
    spike_samples: str = "spike_samples.npy"
    spike_units: str = "spike_units.npy"
    sampling_rate_hz: SamplingRate
    trials: str
    trial_columns: TrialColumns = TrialColumns()
    delimiter: Annotated[str, Field(min_length=1, max_length=1)] = ","
    time_unit: Literal["samples"] = "samples"
    trial_time_unit: TimeUnit = "s"
    clock: Literal["session"] = "session"

    @model_validator(mode="after")
    def _trials_on_the_session_clock(self) -> "SampleArraysSource":
        tc = self.trial_columns
        if tc.start is None or tc.stop is None:
            raise ValueError("spikes of a sorter's folder are assigned to trials by time: set trial_columns.start "
                             "and trial_columns.stop (each trial's start and stop on the session clock)")
        if self.align == "onset" and tc.onset is None:
            raise ValueError("set trial_columns.onset (the trial table's stimulus onset column) or align to one "
                             "of trial_columns.events")
        if self.align != "onset" and self.align not in tc.events:
            raise ValueError("align names an event: 'onset' or one of trial_columns.events")
        return self

    @property
    def assign_spikes(self) -> str:
        return "by_time"

    def path_in_folder(self, name: str) -> str:
        return f"{self.folder.rstrip('/')}/{name}"

    def files(self) -> dict[str, str]:
        files = {"spike_samples": self.path_in_folder(self.spike_samples),
                 "spike_units": self.path_in_folder(self.spike_units), "trials": self.trials}
        if self.unit_table:
            files["units"] = self.path_in_folder(self.unit_table.file)
        return files

    def unit_files(self) -> dict[str, str]:
        return {"units": self.path_in_folder(self.unit_table.file)} if self.unit_table else {}

    @property
    def has_stimulus_window(self) -> bool:
        return None not in (self.trial_columns.onset, self.trial_columns.offset)


SOURCE_MODELS = (CsvSource, ParquetSource, NwbSource, SampleArraysSource)


def _format_of(value: Any) -> str:
    if isinstance(value, dict):
        return value.get("format", DEFAULT_FORMAT)
    return getattr(value, "format", DEFAULT_FORMAT)


def _tagged(model: type) -> Any:
    return Annotated[model, Tag(model.model_fields["format"].annotation.__args__[0])]


Source = Annotated[Union[tuple(_tagged(m) for m in SOURCE_MODELS)], Discriminator(_format_of)]
