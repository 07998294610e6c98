"""The survey's guesses about time: the unit of the times (s, ms or samples, and the sampling
rate to ask about), the clock they are on, and the windows every trial recorded."""

from __future__ import annotations

import numpy as np

from figspec.data.survey_names import COMMON_RATE_HZ, SAMPLE_WORDS, TIME_SUFFIXES, Guess, Survey, split_name


def _time_unit_from_names(columns: list[str]) -> tuple[str | None, str | None]:
    for column in columns:
        unit = TIME_SUFFIXES.get(split_name(column)[1] or "")
        if unit:
            return unit, column
    return None, None


def in_samples(out: Survey) -> str | None:
    """Why the spike times look like sample indices (a sorter's folder; a column of whole
    numbers named like samples), or None."""
    column = out.spike_columns["time"].value
    if out.spikes.format == "sample_arrays":
        return "a sorter's folder holds spike times as sample indices"
    values = out.spikes.frame[column]
    whole = values.dtype.kind in "iu"
    if whole and any(word in split_name(column)[0].split("_") for word in SAMPLE_WORDS):
        return f"{column!r} holds whole numbers and is named like sample indices"
    if whole and values.size and values.max() > 10 ** 6 and values.nunique() > values.size // 2:
        return f"{column!r} holds whole numbers up to {values.max():,}, like sample indices"
    return None


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
    samples = in_samples(out)
    if samples:
        out.sampling_rate_hz = Guess(COMMON_RATE_HZ, f"{COMMON_RATE_HZ} Hz is common for extracellular probes",
                                     "what is the recording's sampling rate (Hz)? Spike times are converted with it")
        trial_unit, column = _time_unit_from_names([g.value for r, g in out.trial_columns.items()
                                                    if r in ("onset", "offset", "start", "stop")])
        out.time_unit = Guess("samples", samples)
        out.trial_time_unit = Guess(trial_unit or "s", f"the column name {column!r} says so" if trial_unit else
                                    "trial tables usually hold seconds", None if trial_unit else
                                    "are the trial table's times in s, ms or samples?")
        return
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
        out.time_unit = Guess(unit, f"the column name {column!r} ends in _{split_name(column)[1]}", question)
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
    unit = out.trial_time_unit.value if out.trial_time_unit else out.time_unit.value
    scale = {"s": 1000.0, "ms": 1.0, "samples": 1000.0 / float(out.sampling_rate_hz.value) if out.sampling_rate_hz
             else 1.0}[unit]
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
