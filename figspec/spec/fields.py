"""Reusable annotated field types (first tier of checks: one field at a time)."""

from __future__ import annotations

from typing import Annotated

from pydantic import AfterValidator, BaseModel, ConfigDict, Field


class Frozen(BaseModel):
    """Base of every spec model: immutable, unknown keys are errors."""

    model_config = ConfigDict(frozen=True, extra="forbid", populate_by_name=False)


PositiveMs = Annotated[float, Field(gt=0, description="a duration in ms, > 0")]
Millimetres = Annotated[float, Field(gt=0, le=2000, description="a length in mm")]
Points = Annotated[float, Field(gt=0, le=72, description="a size in points")]
Fraction = Annotated[float, Field(ge=0, le=1)]


def _ordered_window(value: tuple[float, float]) -> tuple[float, float]:
    start, stop = value
    if not start < stop:
        raise ValueError(f"the window must be [start, stop] with start < stop, got [{start:g}, {stop:g}]")
    return value


WindowMs = Annotated[tuple[float, float], AfterValidator(_ordered_window)]


def _identifier(value: str) -> str:
    if not value or not value.replace("_", "").replace("-", "").isalnum():
        raise ValueError("use letters, digits, '_' or '-' only")
    return value


Name = Annotated[str, AfterValidator(_identifier)]


def _hex_colour(value: str) -> str:
    text = value.lstrip("#")
    if len(text) not in (6, 8) or any(c not in "0123456789abcdefABCDEF" for c in text):
        raise ValueError("a colour is a hex string like '#1f4e79'")
    return "#" + text.lower()


Colour = Annotated[str, AfterValidator(_hex_colour)]
