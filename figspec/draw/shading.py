"""The stimulus window, drawn as shading behind the data or as a bar above it, its colour or
opacity encoding the level; and the small key that explains the encoding."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.optional import deferred
from figspec.spec.models import StimulusSpec
from figspec.spec.style import Style

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

if TYPE_CHECKING:
    from matplotlib.axes import Axes

BAR_AXES_Y = (1.03, 1.09)   # where a stimulus bar sits, in axes-height units above the data


def level_fraction(levels: np.ndarray, all_levels: np.ndarray, scale: str = "linear") -> np.ndarray:
    """Position of each level between the lowest (0) and highest (1) of ``all_levels``,
    linear in level or in log(level); a single level is 1."""
    levels = np.asarray(levels, dtype=float)
    lo, hi = float(np.min(all_levels)), float(np.max(all_levels))
    if hi == lo:
        return np.ones(np.shape(levels))
    if scale == "log":
        return (np.log(levels) - np.log(lo)) / (np.log(hi) - np.log(lo))
    return (levels - lo) / (hi - lo)


def level_opacity(levels: np.ndarray, all_levels: np.ndarray, opacity: tuple[float, float],
                  scale: str = "linear") -> np.ndarray:
    """Opacity rising from ``opacity[0]`` (lowest level) to ``opacity[1]`` (highest)."""
    lo, hi = opacity
    return lo + (hi - lo) * level_fraction(levels, all_levels, scale)


def wavelength_rgb(nm: float) -> tuple[float, float, float]:
    """An RGB colour for light of wavelength ``nm`` (380-780 nm).

    Piecewise-linear approximation of the visible spectrum after Dan Bruton, "Approximate RGB
    values for visible wavelengths" (1996; from memory), with intensity falling off toward
    both ends of vision and a 0.8 gamma. A display cannot show spectral colours: this is a
    reminder of the hue, not a colorimetric rendering.
    """
    w = float(nm)
    if w < 440:
        r, g, b = -(w - 440) / 60, 0.0, 1.0
    elif w < 490:
        r, g, b = 0.0, (w - 440) / 50, 1.0
    elif w < 510:
        r, g, b = 0.0, 1.0, -(w - 510) / 20
    elif w < 580:
        r, g, b = (w - 510) / 70, 1.0, 0.0
    elif w < 645:
        r, g, b = 1.0, -(w - 645) / 65, 0.0
    else:
        r, g, b = 1.0, 0.0, 0.0
    if w < 420:
        factor = 0.3 + 0.7 * (w - 380) / 40
    elif w > 700:
        factor = 0.3 + 0.7 * (780 - w) / 80
    else:
        factor = 1.0
    return tuple(float((c * factor) ** 0.8) for c in (r, g, b))


def level_appearance(all_levels: np.ndarray, stimulus: StimulusSpec, style: Style) -> dict[float, tuple]:
    """(colour, opacity) of the stimulus mark at each level, by the spec's encoding."""
    import matplotlib as mpl

    levels = np.asarray(sorted(set(float(v) for v in all_levels)))
    t = level_fraction(levels, levels, stimulus.opacity_scale)
    alpha = level_opacity(levels, levels, stimulus.opacity, stimulus.opacity_scale)
    if stimulus.encoding == "colormap":
        cmap = mpl.colormaps[stimulus.colormap or style.palette.stimulus_levels]
        return {lv: (mpl.colors.to_hex(cmap(0.2 + 0.8 * f)), stimulus.opacity[1]) for lv, f in zip(levels, t)}
    colour = mpl.colors.to_hex(wavelength_rgb(stimulus.wavelength_nm)) if stimulus.encoding == "wavelength" \
        else style.stimulus.colour
    return {lv: (colour, float(a)) for lv, a in zip(levels, alpha)}


def mark_stimulus(ax: "Axes", window: pd.Series, colour: str, alpha: float, style: Style, mark: str) -> list:
    """Draw one stimulus window (a row of the stimulus table): shading behind the data, or a
    bar above the axes. Where per-trial stops differ, the span from the earliest to the latest
    stop (and from the earliest to the latest start) is drawn fainter, so the figure shows the
    range rather than pretending to one window."""
    start = window.get("start_max_ms", window["start_ms"])
    parts = [(start, window["stop_min_ms"], alpha)]
    if start > window["start_ms"]:
        parts.append((window["start_ms"], start, alpha * style.stimulus.range_hatch_opacity))
    if window["stop_max_ms"] > window["stop_min_ms"]:
        parts.append((window["stop_min_ms"], window["stop_max_ms"], alpha * style.stimulus.range_hatch_opacity))
    artists = []
    for start, stop, a in parts:
        if mark == "shade":
            artist = ax.axvspan(start, stop, color=colour, alpha=a, linewidth=0, zorder=0)
        else:
            from matplotlib.patches import Rectangle

            artist = Rectangle((start, BAR_AXES_Y[0]), stop - start, BAR_AXES_Y[1] - BAR_AXES_Y[0],
                               transform=ax.get_xaxis_transform(), color=colour, alpha=max(a, 0.15),
                               linewidth=0, clip_on=False)
            ax.add_patch(artist)
        artist.set_gid("stimulus")
        artists.append(artist)
    return artists


def stimulus_key(fig, appearance: dict[float, tuple], label: str, level_text, ranges: bool,
                 under: list | None = None, sham: list[float] = ()) -> None:
    """A small key under ``fig`` (the figure, or the one panel's subfigure that shows the
    stimulus): the stimulus at the lowest, a middle and the highest level. With ``under`` (the
    subfigures of several shaded panels), the figure's key is centred under their union."""
    from matplotlib.patches import Patch

    levels = sorted(appearance)
    shown = [levels[0], levels[len(levels) // 2], levels[-1]] if len(levels) > 2 else levels
    shown = list(dict.fromkeys(shown))
    handles = [Patch(facecolor=appearance[lv][0], alpha=appearance[lv][1], linewidth=0) for lv in shown]
    labels = [level_text(lv) for lv in shown]
    for lv in sham:                          # drawn unshaded: the key says so with an empty box
        handles.append(Patch(facecolor="none", edgecolor="0.6", linewidth=0.5))
        labels.append(f"{level_text(lv)}: none")
    title = label + (" (fainter: range of onsets or offsets across trials)" if ranges else "")
    key = fig.legend(handles, labels, loc="outside lower center", ncols=min(len(handles), 3), title=title,
                     title_fontsize=None, handlelength=1.5, columnspacing=1.2, alignment="center")
    if under:
        centre_under(key, fig, under)


def centre_under(key, fig, subfigures: list) -> None:
    """Centre a figure key horizontally under the union of ``subfigures``, as they are laid out
    when the figure is drawn. The key keeps no anchor of its own (``_bbox_to_anchor`` stays
    None), so constrained layout still makes room for it below the panels; only the box it is
    placed in (``get_bbox_to_anchor``, read at draw time) becomes the union's span."""
    from matplotlib.transforms import Bbox

    def span() -> Bbox:
        left = min(sub.bbox.x0 for sub in subfigures)
        right = max(sub.bbox.x1 for sub in subfigures)
        return Bbox([[left, fig.bbox.y0], [right, fig.bbox.y1]])

    key.get_bbox_to_anchor = span
