"""What draw functions receive besides axes, table and panel; and the style applied only
inside a context, so nothing leaks between figures."""

from __future__ import annotations

import contextlib
from dataclasses import dataclass
from typing import Iterator

from figspec.spec.models import LevelSpec
from figspec.spec.style import Style


@dataclass(frozen=True)
class DrawContext:
    """Figure-wide settings a draw function may read."""

    style: Style
    levels: LevelSpec


def group_key(repeat: str, value) -> float | str:
    """How repeated axes are keyed: levels as floats, units as strings."""
    return float(value) if repeat == "level" else str(value)


@contextlib.contextmanager
def styled(style: Style) -> Iterator[None]:
    """matplotlib settings of ``style`` from a clean default base, restored on exit."""
    import matplotlib as mpl

    with mpl.rc_context():
        mpl.rcdefaults()
        mpl.rcParams.update(style.rc())
        yield
