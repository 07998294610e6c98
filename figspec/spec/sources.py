"""``[sources.NAME]`` models: one per data format, joined in a union tagged by ``format``.

A source model says which files it reads (:meth:`files`, for provenance and messages) and how
its columns map to figspec's canonical names. ``format`` may be left out for ``csv``. A new
format is one model here, one member of :data:`SOURCE_MODELS`, one reader module in
``figspec/data/`` and one line in ``figspec.data.readers.READERS``.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal, Union

from pydantic import Discriminator, Field, Tag, model_validator

from figspec.spec.fields import Frozen

DEFAULT_FORMAT = "csv"


class SpikeColumns(Frozen):
    """Column names in the spike table (one row per spike)."""

    unit: str = "unit"
    trial: str = "trial"
    time: str = "time"
    level: str | None = None


class TrialColumns(Frozen):
    """Column names in the trial table (one row per presented trial).

    ``onset`` names the column spikes are aligned to; without it spike times are taken as
    already relative to stimulus onset. ``unit`` is for trials that belong to one unit each.
    """

    trial: str = "trial"
    level: str = "level"
    onset: str | None = None
    offset: str | None = None
    unit: str | None = None


class TableSource(Frozen):
    """Keys of every source made of a spike table and (preferably) a trial table."""

    spikes: str
    trials: str | None = None
    time_unit: Literal["s", "ms"] = "s"
    spike_columns: SpikeColumns = SpikeColumns()
    trial_columns: TrialColumns = TrialColumns()
    trials_per_level: Annotated[int, Field(gt=0)] | dict[str, Annotated[int, Field(gt=0)]] | None = None
    unit_name: str | None = None

    @model_validator(mode="after")
    def _trials_described(self) -> "TableSource":
        if self.trials is not None and self.trials_per_level is not None:
            raise ValueError("give either a trial table (trials) or trials_per_level, not both")
        if self.trial_columns.offset is not None and self.trial_columns.onset is None:
            raise ValueError("trial_columns.offset needs trial_columns.onset (offsets are taken relative to it)")
        if self.trials is None and self.spike_columns.level is None:
            raise ValueError("without a trial table the spike table must carry the level: "
                             "set spike_columns.level")
        return self

    def files(self) -> dict[str, str]:
        """The files this source reads, by role (paths as written, relative to the spec)."""
        return {role: path for role, path in (("spikes", self.spikes), ("trials", self.trials)) if path}

    @property
    def has_stimulus_window(self) -> bool:
        """Whether the trial table gives each trial's stimulus onset and offset."""
        return self.trials is not None and None not in (self.trial_columns.onset, self.trial_columns.offset)


class CsvSource(TableSource):
    """``format = "csv"`` (the default): comma-separated spike and trial tables."""

    format: Literal["csv"] = "csv"


SOURCE_MODELS = (CsvSource,)


def _format_of(value: Any) -> str:
    if isinstance(value, dict):
        return value.get("format", DEFAULT_FORMAT)
    return getattr(value, "format", DEFAULT_FORMAT)


def _tagged(model: type) -> Any:
    return Annotated[model, Tag(model.model_fields["format"].default)]


Source = Annotated[Union[tuple(_tagged(m) for m in SOURCE_MODELS)], Discriminator(_format_of)]
