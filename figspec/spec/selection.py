"""Which trials to keep: leave out trials by key, and keep trials whose trial-table columns meet
conditions. Used per source (``[sources.NAME.keep]``) and per panel (``keep``)."""

from __future__ import annotations

from typing import Annotated, Literal, Union

from pydantic import Field, StrictBool, StrictFloat, StrictInt, StrictStr, model_validator

from figspec.spec.fields import Colour, Frozen, Text

Scalar = Union[StrictBool, StrictInt, StrictFloat, StrictStr]


class Range(Frozen):
    """A numeric range: ``{ min = 0, max = 5 }`` keeps values with min <= value <= max."""

    min: float | None = None
    max: float | None = None

    @model_validator(mode="after")
    def _some_bound(self) -> "Range":
        if self.min is None and self.max is None:
            raise ValueError("a range needs min, max or both")
        if self.min is not None and self.max is not None and self.min > self.max:
            raise ValueError(f"min must be <= max (got {self.min:g} and {self.max:g})")
        return self


Condition = Union[Scalar, Annotated[list[Scalar], Field(min_length=1)], Range]


class TrialSelection(Frozen):
    """``exclude``: trial keys to leave out (a value, or a list of values for a key of several
    columns); ``where``: column -> a value (equality), a list of values, or a range."""

    exclude: list[Union[Scalar, list[Scalar]]] = Field(default_factory=list)
    where: dict[str, Condition] = Field(default_factory=dict)

    @property
    def empty(self) -> bool:
        return not self.exclude and not self.where


class ConditionSplit(Frozen):
    """``conditions``: split a panel's trials by a trial-table column into conditions drawn and
    tested against each other. ``values`` gives the conditions and their order (every distinct
    value of the column, sorted, when not set; trials with another value are left out and
    counted); ``names`` their display names (default ``column = value``); ``colours`` and
    ``lines`` override the style's condition colours and line styles. ``test`` (default true)
    adds the kind's test between the conditions: within a unit across trials, Mann-Whitney U per
    level, Holm-corrected across levels; across units, Wilcoxon signed-rank on the paired
    per-unit values."""

    column: str = Field(min_length=1)
    values: Annotated[list[Scalar], Field(min_length=2, max_length=6)] | None = None
    names: Annotated[list[Text], Field(min_length=2, max_length=6)] | None = None
    colours: Annotated[list[Colour], Field(min_length=2, max_length=6)] | None = None
    lines: Annotated[list[Literal["solid", "dashed", "dotted", "dashdot"]], Field(min_length=2, max_length=6)] | None = None
    test: bool = True

    @model_validator(mode="after")
    def _lengths(self) -> "ConditionSplit":
        for key in ("names", "colours", "lines"):
            given = getattr(self, key)
            if given is not None and self.values is None:
                raise ValueError(f"{key} follow the order of values: list the values too")
            if given is not None and len(given) != len(self.values):
                raise ValueError(f"{key} has {len(given)} entries for {len(self.values)} values")
        if self.values is not None and len({repr(v) for v in self.values}) != len(self.values):
            raise ValueError("values repeat: each condition is one value of the column")
        return self

    def looks(self, n: int, palette) -> list[tuple[str, str]]:
        """(colour, line style) of each of ``n`` conditions: the spec's, else the style palette's."""
        colours = self.colours or [palette.conditions[i % len(palette.conditions)] for i in range(n)]
        lines = self.lines or [palette.condition_lines[i % len(palette.condition_lines)] for i in range(n)]
        return list(zip(colours, lines))
