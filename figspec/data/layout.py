"""How a source lays out its times and trials (from its spec), and where messages point: the
one object the assembly and its checks share."""

from __future__ import annotations

from dataclasses import dataclass, field

from figspec.data.trials_from_spikes import TrialCounts
from figspec.errors import Loc
from figspec.spec.selection import TrialSelection


@dataclass(frozen=True)
class Layout:
    """How a source's times and trials are laid out (from its spec), and where to point messages."""

    where: str
    locs: dict[str, Loc]
    time_unit: str = "s"
    trial_time_unit: str | None = None   # None: that of the spikes
    sampling_rate_hz: float | None = None
    clock: str = "aligned"
    align: str = "onset"                 # "onset" or an event name
    assign: str = "by_key"
    ticks_per_second: int = 1_000_000
    extent_ms: tuple[float, float] | None = None
    keep: TrialSelection = field(default_factory=TrialSelection)
    keep_loc: Loc = ()
    counts: TrialCounts = field(default_factory=lambda: TrialCounts(None, ()))

    @property
    def ticks_per_ms(self) -> int:
        return self.ticks_per_second // 1000

    @property
    def align_column(self) -> str:
        return "onset" if self.align == "onset" else f"event:{self.align}"
