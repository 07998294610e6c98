"""Which trials to keep: leave out trials by key, and keep trials whose trial-table columns meet
conditions. Used per source (``[sources.NAME.keep]``) and per panel (``keep``)."""

from __future__ import annotations

from typing import Annotated, Union

from pydantic import Field, StrictBool, StrictFloat, StrictInt, StrictStr, model_validator

from figspec.spec.fields import Frozen

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
