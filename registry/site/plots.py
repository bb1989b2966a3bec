"""Plots for the site, drawn with matplotlib's object API (never pyplot) into SVG text.

Every plot is deterministic: element ids come from a fixed hash salt and no date is written, so the
same data gives the same bytes. Backgrounds are transparent and colours mid-contrast; the site's dark
theme inverts the image lightness with a CSS filter, so one file serves both themes.
"""
from __future__ import annotations

import functools
import io
import math
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from registry.incremental import DiskCache, array_key, cached_map, key_of
from registry.core import figure_keys as FK
from registry.site.plot_check import plain_svg
from registry.core.results import CableResult, Curve, InstallationResult, PatternResult
from registry.physics.metrics import HALF_POWER_DB  # 10·log10(0.5): one half-power level everywhere

INK = "#2b2f36"
GRID = "#9aa3ad"
LINE = "#1d63a8"
SECOND = "#b8570f"
LIMIT = "#b0262a"
BAND = "#3f8f5f"

RC = {
    "svg.hashsalt": "aerialbook",
    "svg.fonttype": "none",
    "font.family": "DejaVu Sans",
    "font.size": 9.0,
    "axes.edgecolor": INK,
    "axes.labelcolor": INK,
    "text.color": INK,
    "xtick.color": INK,
    "ytick.color": INK,
    "grid.color": GRID,
    "grid.linewidth": 0.6,
    "grid.alpha": 0.7,
    "legend.frameon": True,
    "legend.framealpha": 0.0,
    "legend.edgecolor": GRID,
    "savefig.transparent": True,
    "path.simplify": False,
}


@dataclass(frozen=True)
class Drawn:
    """One plot: its SVG text and a sentence saying what it shows, for the image's alt text."""

    svg: str
    alt: str


def _figure(width_in: float, height_in: float):
    from matplotlib.backends.backend_agg import FigureCanvasAgg  # imported when a plot is drawn
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in), dpi=96)
    FigureCanvasAgg(fig)
    fig.patch.set_alpha(0.0)
    return fig


def _to_svg(fig) -> str:
    buffer = io.StringIO()
    fig.savefig(buffer, format="svg", metadata={"Date": None}, transparent=True)
    return buffer.getvalue()


def _styled(draw):
    """Run a plot function inside the site's matplotlib settings (style, fixed SVG hash salt)."""

    @functools.wraps(draw)
    def wrapper(*args, **kwargs):
        import matplotlib  # imported when a plot is drawn: a build from the cache never loads it

        with matplotlib.rc_context(RC):
            return draw(*args, **kwargs)

    return wrapper


def half_power_points(angle_deg: np.ndarray, gain_dbi: np.ndarray) -> tuple[float, float] | None:
    """The two angles (degrees) either side of the peak where the level falls to half power,
    HALF_POWER_DB = 10·log₁₀(0.5) ≈ −3.01 dB below it.

    Walks outwards from the peak around the cut (circular when its samples go all round, whether or not
    the first angle is repeated at the end) and interpolates linearly between samples. None when the
    cut never falls to half power (an omnidirectional cut).
    """
    angle = np.asarray(angle_deg, dtype=float)
    gain = np.asarray(gain_dbi, dtype=float)
    if angle.size < 3 or not np.isfinite(gain).any():
        return None
    gain = np.where(np.isfinite(gain), gain, -np.inf)
    n = angle.size
    peak = int(np.argmax(gain))
    level = gain[peak] + HALF_POWER_DB
    if not (gain < level).any():
        return None
    # a closed cut repeats its first angle at the end: walk over distinct samples only; a cut whose
    # samples reach all round without repeating it is circular too
    span = angle[-1] - angle[0]
    repeats = math.isclose(span % 360.0, 0.0, abs_tol=1e-9) and span > 0
    all_round = math.isclose(span + (angle[1] - angle[0]), 360.0, rel_tol=1e-9)
    closed = repeats or all_round
    distinct = n - 1 if repeats else n

    def walk(step: int) -> float | None:
        i = peak
        for _ in range(distinct):
            j = i + step
            if closed:
                j %= distinct
            elif not 0 <= j < n:
                return None
            if gain[j] < level:
                g0, g1 = gain[i], gain[j]
                frac = 0.0 if not np.isfinite(g1) else (g0 - level) / (g0 - g1)
                a0 = angle[i]
                a1 = angle[j] if abs(angle[j] - a0) <= 180 else angle[j] + math.copysign(360.0, a0 - angle[j])
                return float(a0 + frac * (a1 - a0))
            i = j
        return None

    low, high = walk(-1), walk(+1)
    if low is None or high is None:
        return None
    return low, high


def beamwidth_deg(points: tuple[float, float]) -> float:
    """Angular width between two half-power points, going through the peak side (0..360)."""
    low, high = points
    return float((high - low) % 360.0) or 360.0


def _finite_peak(values: np.ndarray) -> float:
    values = np.asarray(values, dtype=float)
    return float(values[np.isfinite(values)].max())


def _polar_cut(ax, curve: Curve, title: str, floor_db: float, top_db: float, width_deg: float | None) -> str:
    """One polar cut; its caption states width_deg, the pattern's computed half-power beamwidth (nan:
    none; None: not computed, the cut's own), so the plot says what the figures say. The dots mark where this cut crosses half power."""
    theta = np.radians(np.asarray(curve.x, dtype=float))
    gain = np.asarray(curve.y, dtype=float)
    shown = np.clip(np.where(np.isfinite(gain), gain, floor_db), floor_db, None)
    ax.set_theta_zero_location("N")
    ax.set_theta_direction(-1)
    ax.patch.set_alpha(0.0)
    ax.plot(theta, shown, color=LINE, linewidth=1.6)
    ax.set_ylim(floor_db, top_db)
    ticks = np.arange(math.ceil(floor_db / 10.0) * 10.0, top_db + 0.01, 10.0)
    ax.set_yticks(ticks)
    ax.set_yticklabels([f"{t:g}" for t in ticks], fontsize=7)
    ax.set_rlabel_position(112.5)
    ax.grid(True)
    ax.set_title(title, pad=14, fontsize=10)
    ax.text(math.radians(112.5), top_db + (top_db - floor_db) * 0.16, "dBi", fontsize=7, ha="center")
    if not len(curve.x):
        ax.text(0.5, -0.14, "not modelled (see the figures)", transform=ax.transAxes, ha="center", fontsize=8)
        return "not modelled"
    points = half_power_points(curve.x, curve.y)
    if points is not None:
        peak = _finite_peak(gain)
        for angle in points:
            ax.plot([math.radians(angle)], [peak + HALF_POWER_DB], marker="o", markersize=5, color=SECOND,
                    linestyle="none")
    if width_deg is None:  # a pattern without its computed beamwidth: the cut's own
        width_deg = beamwidth_deg(points) if points is not None else math.nan
    if not math.isfinite(width_deg):
        ax.text(0.5, -0.14, f"{curve.x_label}; above half power all round", transform=ax.transAxes,
                ha="center", fontsize=8)
        return "no half-power points (above half power all round)"
    ax.text(0.5, -0.14, f"{curve.x_label}; half-power beamwidth {_degrees(width_deg)}°", transform=ax.transAxes,
            ha="center", fontsize=8, color=INK)
    where_text = "" if points is None else f"half-power points at {points[0] % 360:.1f}° and {points[1] % 360:.1f}°, "
    return f"{where_text}beamwidth {_degrees(width_deg)}°"


def _degrees(width_deg: float) -> str:
    """A beamwidth to the degree, or to a tenth under 10° (a pencil beam)."""
    return f"{width_deg:.0f}" if width_deg >= 10 else f"{width_deg:.1f}"


def _metric(pattern: PatternResult, key: str) -> float | None:
    for figure in pattern.metrics:
        if figure.key == key:
            return float(figure.value) if isinstance(figure.value, (int, float)) else math.nan
    return None


@_styled
def pattern_plot(pattern: PatternResult) -> Drawn:
    """E- and H-plane cuts side by side on polar axes, directivity in dBi (the pattern is lossless),
    half-power points marked; the captions give the pattern's computed beamwidths."""
    fig = _figure(7.2, 3.9)
    peaks = [_finite_peak(c.y) for c in (pattern.e_plane, pattern.h_plane) if np.isfinite(c.y).any()]
    top = math.ceil(max(peaks) / 5.0) * 5.0 + 5.0 if peaks else 10.0
    floor = top - 40.0
    notes = []
    cuts = ((pattern.e_plane, "E-plane", FK.PATTERN_HPBW_E_DEG), (pattern.h_plane, "H-plane", FK.PATTERN_HPBW_H_DEG))
    for index, (curve, name, key) in enumerate(cuts):
        ax = fig.add_subplot(1, 2, index + 1, projection="polar")
        notes.append(f"{name}: " + _polar_cut(ax, curve, f"{name} directivity", floor, top, _metric(pattern, key)))
    fig.subplots_adjust(left=0.06, right=0.94, top=0.84, bottom=0.14, wspace=0.45)
    fig.suptitle(f"{pattern.antenna} at {pattern.freq_mhz:g} MHz", fontsize=10, y=0.98)
    peak_text = f"peak {max(peaks):.1f} dBi; " if peaks else ""
    alt = (f"Polar plots of the E-plane and H-plane directivity of antenna model {pattern.antenna} at "
           f"{pattern.freq_mhz:g} MHz, in dBi, {floor:g} to {top:g} dBi; {peak_text}" + "; ".join(notes) + ".")
    return Drawn(_to_svg(fig), alt)


def vswr_curves(result: InstallationResult) -> list[tuple[Curve, str, str, str]]:
    """The curves a VSWR plot shows: (curve, legend name, colour, line style)."""
    return [(c, name, colour, style) for c, name, colour, style in (
        (result.vswr_modelled, "modelled, bare element", LINE, "-"),
        (result.vswr_measured, "measured sweep", SECOND, "--"),
    ) if c is not None and len(c.x)]


def vswr_key(result: InstallationResult) -> str | None:
    """Content key of an installation's VSWR plot (None when there is nothing to draw): installations
    with the same curves, bands and limit share one plot."""
    curves = vswr_curves(result)
    if not curves:
        return None
    parts = []
    for curve, name, _, _ in curves:
        parts += [name, np.asarray(curve.x), np.asarray(curve.y)]
    return array_key(*parts, result.service_bands_mhz, result.vswr_limit)


def vswr_alt(result: InstallationResult, title: str) -> str:
    """Alt text of an installation's VSWR plot."""
    bands = ", ".join(f"{low:g}–{high:g} MHz" for low, high in result.service_bands_mhz) or "none given"
    names = " and ".join(name for _, name, _, _ in vswr_curves(result))
    return (f"VSWR against frequency for {title}: {names} curve, limit {result.vswr_limit:g}:1 drawn as a "
            f"dotted line, service band {bands} shaded.")


@_styled
def vswr_plot(result: InstallationResult, title: str) -> Drawn | None:
    """VSWR against frequency: modelled, measured where a sweep exists, the limit, the band shaded.
    The drawing carries no installation name (it is shared by content); `title` goes into the alt text."""
    curves = vswr_curves(result)
    if not curves:
        return None
    fig = _figure(7.2, 3.4)
    ax = fig.add_subplot(1, 1, 1)
    ax.patch.set_alpha(0.0)
    for index, (low, high) in enumerate(result.service_bands_mhz):
        ax.axvspan(low, high, color=BAND, alpha=0.18, linewidth=0, label="service band" if index == 0 else None)
    top = result.vswr_limit * 1.6
    for curve, name, colour, style in curves:
        y = np.asarray(curve.y, dtype=float)
        ax.plot(curve.x, y, color=colour, linestyle=style, linewidth=1.6, label=name)
        if np.isfinite(y).any():
            top = max(top, min(float(np.nanmax(y)) * 1.05, 10.0))
    ax.axhline(result.vswr_limit, color=LIMIT, linestyle=":", linewidth=1.4,
               label=f"limit {result.vswr_limit:g}:1")
    ax.set_ylim(1.0, top)
    first = curves[0][0]
    ax.set_xlabel(first.x_label)
    ax.set_ylabel(first.y_label)
    ax.grid(True)
    ax.legend(loc="upper right", fontsize=8)
    fig.subplots_adjust(left=0.09, right=0.98, top=0.95, bottom=0.15)
    return Drawn(_to_svg(fig), vswr_alt(result, title))


@_styled
def attenuation_plot(cable: CableResult) -> Drawn:
    """A cable's attenuation table as points and its a·√f + b·f fit as a line."""
    fig = _figure(6.4, 3.2)
    ax = fig.add_subplot(1, 1, 1)
    ax.patch.set_alpha(0.0)
    ax.plot(cable.fitted.x, cable.fitted.y, color=LINE, linewidth=1.6, label="fit a·√f + b·f")
    ax.plot(cable.table.x, cable.table.y, color=SECOND, marker="o", markersize=5, linestyle="none",
            label="catalogue table")
    ax.set_xlabel(cable.table.x_label)
    ax.set_ylabel(cable.table.y_label)
    ax.set_title(f"{cable.cable} attenuation", fontsize=10)
    ax.set_xlim(left=0.0)
    ax.set_ylim(bottom=0.0)
    ax.grid(True)
    ax.legend(loc="upper left", fontsize=8)
    fig.subplots_adjust(left=0.11, right=0.98, top=0.9, bottom=0.16)
    alt = (f"Attenuation of cable {cable.cable} against frequency: {len(cable.table.x)} catalogue points "
           f"and the fitted curve a·√f + b·f, {cable.table.y_label} against {cable.table.x_label}.")
    return Drawn(_to_svg(fig), alt)


class PlotStore:
    """Plots by content key: drawn at most once per build, and kept on disk across builds.

    `cache_dir` (optional) keeps each drawing (SVG and alt text) as a checked cache entry under `plots/`
    (`incremental.DiskCache`), keyed by the tool's code and the kind and key, so new plotting code never
    reuses an old drawing. A drawing read back is published only if it is a plain SVG
    (`plot_check.plain_svg`); anything else is drawn again. The folder is safe to delete at any time.
    """

    def __init__(self, cache_dir: Path | None = None, naive: bool = False):
        self.disk = DiskCache(None if naive else cache_dir, "plots", Drawn)
        self.cache_dir = self.disk.folder
        self.drawn: dict[str, Drawn] = {}
        self.naive = naive
        """Draw every plot every time it is asked for (the benchmark's baseline), keeping nothing."""

    def get(self, kind: str, key: str, draw: Callable[[], Drawn]) -> Drawn:
        """Plot `kind`/`key` from this build, from the disk cache, or from `draw()`."""
        return self.get_all(kind, [(key, draw)])[0]

    def get_all(self, kind: str, wanted: list[tuple[str, Callable[[], Drawn]]], workers: int = 1) -> list[Drawn]:
        """`get` for each (key, draw) in `wanted`; those still to draw are drawn in `workers` processes."""
        if self.naive:
            return [draw() for _, draw in wanted]
        keys = [key for key, _ in wanted]
        found = cached_map(lambda n: wanted[n][1](), range(len(wanted)), keys, _Kind(self, kind), workers)
        for (key, _), drawn in zip(wanted, found):
            self.drawn[f"{kind}-{key}"] = drawn
        return found

    def _put(self, kind: str, key: str, drawn: Drawn) -> None:
        self.disk.put(key_of(kind, key), drawn)

    def _stored(self, kind: str, key: str) -> Drawn | None:
        """A drawing kept by an earlier build, if it is there, undamaged and a plain SVG."""
        if self.disk.folder is None:
            return None
        entry_key = key_of(kind, key)
        drawn = self.disk.get(entry_key)
        if drawn is not None and not plain_svg(drawn.svg):
            self.disk.discard(entry_key)
            return None
        return drawn


class _Kind:
    """One kind of plot in a `PlotStore`, as the cache `cached_map` reads and fills."""

    def __init__(self, store: PlotStore, kind: str):
        self.store, self.kind = store, kind

    def get(self, key: str) -> Drawn | None:
        return self.store.drawn.get(f"{self.kind}-{key}") or self.store._stored(self.kind, key)

    def put(self, key: str, drawn: Drawn) -> None:
        self.store._put(self.kind, key, drawn)
