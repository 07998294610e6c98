"""``figspec draft``: a first spec written from a spike table and a trial table.

The survey (:mod:`figspec.data.survey`) recognises the columns and guesses the time unit and the
clock; this module writes them as a spec whose every guessed line carries a ``# guess:``
comment saying how it was reached, and whose open points are ``# question:`` comments. The
spec draws a level grid (raster | rate, one row per level) and the response and latency against
level of the unit with the most spikes, and renders as it is.
"""

from __future__ import annotations

import json
import math
import os
import re
import sys
from pathlib import Path

from figspec.output.safe_write import write_text
from figspec.data.survey import Guess, Survey, read_any, read_nwb, survey

NICE_STEPS_MS = (1, 2, 5, 10, 20, 25, 50, 100, 200, 250, 500, 1000, 2000, 5000)


def _toml(value) -> str:
    """A TOML literal of a string, number or list of them."""
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_toml(v) for v in value) + "]"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return f"{value:g}"
    # JSON escapes every control character TOML forbids in a basic string except DEL
    return json.dumps(str(value), ensure_ascii=False).replace("\x7f", "\\u007f")


def plain(text) -> str:
    """Text from the data as one harmless comment line: control characters and line or paragraph
    separators (a unit name holding a line break would otherwise start a new TOML line in the
    draft) written as ``\\uXXXX``, and at most 200 characters."""
    import unicodedata

    out = "".join(f"\\u{ord(c):04x}" if unicodedata.category(c) in ("Cc", "Cf", "Zl", "Zp") else c
                  for c in str(text))
    return out if len(out) <= 200 else out[:197] + "..."


def _key(name: str) -> str:
    return name if re.fullmatch(r"[A-Za-z0-9_-]+", name) else json.dumps(name)


def _line(key: str, value, guess: Guess | None = None, note: str | None = None) -> str:
    """``key = value`` with its comments: the guess's reasoning and question, or a plain note."""
    text = f"{_key(key)} = {_toml(value)}"
    comments = []
    if guess is not None:
        comments.append(f"guess: {guess.how}")
        if guess.question:
            comments.append(f"question: {guess.question}")
    elif note:
        comments.append(note)
    if not comments:
        return text
    comments = [plain(c) for c in comments]
    pad = " " * max(1, 28 - len(text))
    return text + pad + "# " + comments[0] + "".join(f"\n{' ' * (len(text) + len(pad))}# {c}" for c in comments[1:])


def _floor_to(value: float, step: float) -> float:
    return math.floor(value / step + 1e-9) * step


def _step_for(span_ms: float) -> float:
    """A round step of about a tenth of a span (ms)."""
    return next((s for s in NICE_STEPS_MS if s >= span_ms / 10), NICE_STEPS_MS[-1])


def windows(s: Survey) -> dict[str, tuple[float, float]]:
    """The time window, response window and baseline window (ms from onset) the draft uses:
    one stimulus duration before the onset and three after it (common practice for a first
    look, not a rule), cut to what every trial recorded."""
    stim = s.stimulus_ms or 50.0
    step = _step_for(stim)
    before = stim if s.before_ms is None else min(stim, s.before_ms)
    after = 3 * stim if s.after_ms is None else min(3 * stim, s.after_ms)
    before, after = _floor_to(before, step) or min(step, before), _floor_to(after, step) or after
    baseline = (-before + 0.0, 0.0) if before > 0 else (-step, 0.0)    # no time before onset: asked
    return {"window": (-before + 0.0, after), "response": (0.0, min(stim + step, after)), "baseline": baseline}


def _relative(path: Path, folder: Path) -> str:
    return Path(os.path.relpath(Path(path).resolve(), folder.resolve())).as_posix()


def draft_text(s: Survey, spec_path: Path) -> str:
    """The spec text for a survey, with paths relative to where the spec will be written."""
    folder = Path(spec_path).resolve().parent
    from figspec.spec.schema import SHIPPED

    unit = s.units[0][0]
    units_note = ", ".join(f"{u} ({n:,} spikes)" for u, n in s.units[:8]) + (" ..." if len(s.units) > 8 else "")
    level_values = ", ".join(f"{v:g} ({n})" for v, n in s.levels[:12]) + (" ..." if len(s.levels) > 12 else "")
    w = windows(s)
    files = [s.spikes.path] + ([s.trials.path] if s.trials is not None and s.trials.path != s.spikes.path else [])
    out = [f"#:schema {_relative(SHIPPED, folder)}",
           f"#  First draft by `figspec draft` from {plain(' and '.join(_relative(p, folder) for p in files))}.",
           "#  Lines marked 'guess:' are figspec's reading of the files: check each one. Lines marked",
           "#  'question:' need your answer. The keys are explained in figspec's README.",
           "", "[figure]",
           _line("title", f"Unit {unit}", note="question: a title for the figure?"),
           _line("height_mm", 130), "",
           "[layout]", _line("rows", 2), _line("columns", 3), _line("widths", [1, 1, 1.2]), "",
           "[levels]",
           _line("quantity", "Level", note="question: what was varied (e.g. \"Sound level\", \"Contrast\")?"),
           _line("unit", s.level_unit.value, s.level_unit),
           f"#  levels in the data (trials): {plain(level_values)}", ""]
    out += ["[stimulus]"]
    if s.stimulus_ms is not None:
        out += [_line("per_trial", True, note="guess: the trial table gives each trial's onset and offset")]
    else:
        out += [_line("start_ms", 0, note="question: the stimulus window, ms from the alignment point?"),
                _line("stop_ms", 50, note="question: 50 ms is a placeholder: how long was the stimulus?")]
    out += [_line("label", "Stimulus"), ""]
    out += _source_lines(s, folder)
    out += _panel_lines(unit, units_note, w, no_baseline=w["window"][0] >= 0, kept=s.keep_units is not None)
    return "\n".join(out) + "\n"


def _source_lines(s: Survey, folder: Path) -> list[str]:
    name = "recording"
    lines = [f"[sources.{name}]"]
    if s.spikes.format == "nwb":
        lines += [_line("format", "nwb"), _line("file", _relative(s.spikes.path, folder))]
        if s.spikes.unit_names:
            lines += [_line("unit_names", s.spikes.unit_names, note="guess: the units table's column of names")]
        tc = s.trial_columns
        lines += [f"[sources.{name}.trial_columns]"]
        lines += [_line(role, tc[role].value, tc[role]) for role in ("level", "onset", "offset") if role in tc]
        return lines + [""]
    if s.spikes.format != "csv":
        lines += [_line("format", s.spikes.format)]
    if s.spikes.format == "sample_arrays":
        samples, units = s.spikes.unit_names.split("|")
        lines += [_line("folder", _relative(s.spikes.path, folder))]
        lines += [_line(key, value) for key, value, default in (("spike_samples", samples, "spike_samples.npy"),
                                                                 ("spike_units", units, "spike_units.npy"))
                  if value != default]
    else:
        lines += [_line("spikes", _relative(s.spikes.path, folder))]
    if s.trials is not None:
        lines += [_line("trials", _relative(s.trials.path, folder))]
    if s.spikes.format == "csv" and s.spikes.delimiter != ",":
        lines += [_line("delimiter", s.spikes.delimiter, note="guess: sniffed from the file's first lines")]
    if s.spikes.format != "sample_arrays":
        lines += [_line("time_unit", s.time_unit.value, s.time_unit)]
    if s.sampling_rate_hz is not None:
        lines += [_line("sampling_rate_hz", s.sampling_rate_hz.value, s.sampling_rate_hz)]
    if s.trial_time_unit is not None:
        lines += [_line("trial_time_unit", s.trial_time_unit.value, s.trial_time_unit)]
    if s.trials_per_level is not None:
        lines += [_line("trials_per_level", s.trials_per_level.value, s.trials_per_level)]
    if s.extent_ms is not None:
        lines += [_line("extent_ms", s.extent_ms.value, s.extent_ms)]
    if s.spikes.format != "sample_arrays" and (s.clock.value != "aligned" or s.trials is not None):
        lines += [_line("clock", s.clock.value, s.clock)]
    if s.trials is not None and "trial" not in s.spike_columns and s.spikes.format != "sample_arrays":
        lines += [_line("assign_spikes", "by_time", note="guess: no trial column in the spike table: spikes "
                        "belong to the trial whose start..stop holds them")]
    if s.spikes.format != "sample_arrays":
        lines += ["", f"[sources.{name}.spike_columns]"]
        for role in ("unit", "trial", "time", "level"):
            if role in s.spike_columns:
                lines.append(_line(role, s.spike_columns[role].value, s.spike_columns[role]))
    if s.trials is not None:
        lines += ["", f"[sources.{name}.trial_columns]"]
        for role in ("trial", "level", "onset", "offset", "start", "stop"):
            if role in s.trial_columns:
                lines.append(_line(role, s.trial_columns[role].value, s.trial_columns[role]))
        if s.events:
            shown = ", ".join(f"{k} = {_toml(v)}" for k, v in s.events.items())
            lines.append(f"# events = {{ {plain(shown)} }}   # other times in the trial table, to align to if you wish")
    table = s.spikes.unit_table
    if table is not None:
        unit_file = table.path.name if s.spikes.format == "sample_arrays" else _relative(table.path, folder)
        lines += ["", f"[sources.{name}.unit_table]", _line("file", unit_file, note="guess: a per-unit table beside "
                  "the spikes"), _line("id", table.id, note="guess: its column of unit ids")]
        if s.keep_units is not None:
            lines += ["", f"[sources.{name}.keep_units]"]
            (column, value), = s.keep_units.value.items()
            lines += [_line(column, value, s.keep_units)]
    return lines + [""]


def _panel_lines(unit: str, units_note: str, w: dict, no_baseline: bool = False, kept: bool = False) -> list[str]:
    window, response, baseline = (list(map(float, w[k])) for k in ("window", "response", "baseline"))
    step = _step_for(window[1] - window[0])
    unit_line = _line("unit", unit, note=f"guess: the {'kept ' if kept else ''}unit with the most spikes; "
                      f"units: {units_note}")
    return [
        "[[panels]]", _line("name", "spikes"), _line("kind", "raster"), unit_line, _line("cell", [1, 1]),
        _line("span", [2, 1]),
        _line("window_ms", window, note="guess: one stimulus before the onset, three after, within every trial"),
        "", "[[panels]]", _line("name", "rate"), _line("kind", "psth"), _line("unit", unit), _line("cell", [1, 2]),
        _line("span", [2, 1]), _line("window_ms", window),
        _line("bin_ms", max(1.0, step / 4), note="question: the bin width (ms) you want to show?"),
        "", "[[panels]]", _line("name", "response"), _line("kind", "level_response"), _line("unit", unit),
        _line("cell", [1, 3]),
        _line("response_ms", response, note="guess: the stimulus and one step after it"),
        _line("baseline_ms", baseline, note="question: no trial recorded time before the onset; the tests "
              "against baseline need a window there" if no_baseline else None),
        "", "[[panels]]", _line("name", "latency"), _line("kind", "latency"), _line("unit", unit),
        _line("cell", [2, 3]), _line("response_ms", response)]


def draft(spikes: Path, trials: Path | None, spec_path: Path) -> tuple[str, Survey]:
    """Survey the files and return the spec text (not yet written) and the survey."""
    if Path(spikes).suffix.lower() == ".nwb":
        if trials is not None:
            from figspec.errors import DataError, Problem

            raise DataError(Problem("an NWB file holds its own trials table: leave out the trial table argument",
                                    file=str(trials)))
        spike_table, trial_table = read_nwb(Path(spikes))
        s = survey(spike_table, trial_table)
        s.trial_columns = {r: g for r, g in s.trial_columns.items() if r in ("level", "onset", "offset")}
    else:
        s = survey(read_any(Path(spikes)), read_any(Path(trials)) if trials else None)
    return draft_text(s, spec_path), s


def write_draft(spikes: Path, trials: Path | None, target: Path, force: bool = False) -> list[tuple[str, str]]:
    """Survey the files, write the spec to ``target`` and check it: the lines to show, each with
    its stream ("out" or "err"). A spec that does not check is reported by the error raised."""
    import warnings

    from figspec import pipeline
    from figspec.errors import FigspecWarning, Problem, UserError

    if target.exists() and not force:
        raise UserError(Problem("exists already; choose another name or add --force", file=str(target)))
    if target.suffix != ".toml":
        raise UserError(Problem("a spec file name ends in .toml", file=str(target)))
    text, survey = draft(spikes, trials, target)
    write_text(target, text)
    lines = [("out", f"wrote {target}: {len(survey.units)} units, {len(survey.levels)} levels; every guess is a "
                     "'# guess:' comment")]
    lines += [("out", f"question: {question}") for question in survey.questions]
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", FigspecWarning)
        try:
            pipeline.check(target)
        except UserError as err:
            for stream, line in lines:
                print(line, file=sys.stdout)
            raise type(err)(err.problems + [Problem("the draft was written but does not check yet: answer the "
                                                    "problem(s) above in it (the lines marked 'question:' say "
                                                    "what figspec could not tell)", file=str(target))]) from None
    lines += [("err", f"{target}: warning: {message}")
              for message in dict.fromkeys(str(w.message) for w in caught if issubclass(w.category, FigspecWarning))]
    return lines + [("out", f"{target} checks; draw it with: figspec render {target}")]
