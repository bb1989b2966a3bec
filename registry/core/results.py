"""What the compute and check stages hand to rendering and reporting: plain frozen records.

The compute stage fills `FleetResults`; the check stage turns them into `Discrepancy` records. Pages and
reports read these and never call the physics themselves.
"""
from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field
from collections.abc import Callable, Iterable
from typing import NamedTuple

import numpy as np



class Figure(NamedTuple):
    """One computed figure with what an auditor needs to follow the arithmetic.

    `inputs` are (name, value-with-unit) pairs shown beside the formula; `source` names the method's
    reference; `src` is the "file:line" of the registry value the figure rests on most directly.
    A named tuple rather than a dataclass: a fleet has millions of figures, and tuples are the cheapest
    to keep in the cache and read back.
    """

    key: str
    label: str
    value: float | str | None
    unit: str
    formula: str = ""
    inputs: tuple[tuple[str, str], ...] = ()
    source: str = ""
    src: str = ""


@dataclass(frozen=True, slots=True)
class Curve:
    """A sampled curve, x and y as float arrays of equal length, with axis labels carrying units."""

    x: np.ndarray
    y: np.ndarray
    x_label: str
    y_label: str


@dataclass(frozen=True, slots=True)
class PatternResult:
    """A radiation pattern computed once per (antenna model content, frequency).

    `key` is the content key (stable hash text) shared by every installation of the same model at the
    same frequency; plots are drawn once per key. Cuts are gain in dBi against angle in degrees.
    """

    key: str
    antenna: str
    kind: str
    freq_mhz: float
    e_plane: Curve
    h_plane: Curve
    metrics: tuple[Figure, ...]


class WithFigures:
    """Lookup of a figure by key, for records holding `figures`."""

    __slots__ = ()

    figures: tuple[Figure, ...]

    def figure(self, key: str) -> Figure | None:
        """The figure with this key, or None when it could not be computed."""
        for item in self.figures:
            if item.key == key:
                return item
        return None


@dataclass(frozen=True, slots=True)
class InstallationResult(WithFigures):
    """Everything computed for one installation."""

    aircraft: str
    position: str
    figures: tuple[Figure, ...]
    pattern_key: str | None = None
    vswr_modelled: Curve | None = None
    vswr_measured: Curve | None = None
    service_bands_mhz: tuple[tuple[float, float], ...] = ()
    vswr_limit: float = 2.0



@dataclass(frozen=True, slots=True)
class PairResult(WithFigures):
    """Isolation between two installations on one aircraft (positions in sorted order)."""

    aircraft: str
    position_a: str
    position_b: str
    figures: tuple[Figure, ...]
    near_field: bool



@dataclass(frozen=True, slots=True)
class CableResult:
    """A cable's attenuation table, its a·√f + b·f fit and the fit's residual."""

    cable: str
    table: Curve
    fitted: Curve
    figures: tuple[Figure, ...]


class CositeHit(NamedTuple):
    """One harmonic of a transmitter landing in a receiver's band, and its margin's arithmetic.

    `channels_lo_mhz`..`channels_hi_mhz` are the transmit frequencies (channels, `channel_count` of them
    at `step_khz`; 0 for a continuous range) whose `order`-th harmonic lies in the band, over
    `product_lo_mhz`..`product_hi_mhz`. `figures` lay the margin out step by step; `margin_db` is None
    when the table gives no level for one side."""

    order: int
    channels_lo_mhz: float
    channels_hi_mhz: float
    channel_count: int
    step_khz: float
    product_lo_mhz: float
    product_hi_mhz: float
    figures: tuple[Figure, ...]
    margin_db: float | None

    @property
    def channels(self) -> str:
        """'channels 121.100–121.250 MHz (7 at 25 kHz)' or 'transmit 1646.5–1660.5 MHz'."""
        span = f"{self.channels_lo_mhz:.3f}–{self.channels_hi_mhz:.3f} MHz"
        if not self.channel_count:
            return f"transmit {span}"
        word = "channel" if self.channel_count == 1 else "channels"
        return f"{word} {span} ({self.channel_count} at {self.step_khz:g} kHz)"

    @property
    def product(self) -> str:
        """'13th harmonic'."""
        suffix = "th" if 10 <= self.order % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(self.order % 10, "th")
        return f"{self.order}{suffix} harmonic"


@dataclass(frozen=True, slots=True)
class CositePath(WithFigures):
    """A transmitter → receiver pair on one aircraft; `excused_by` names the suppression line both share
    (then no hits are listed). `figures` are the hit's with the worst margin."""

    aircraft: str
    tx: str
    rx: str
    tx_service: str
    rx_service: str
    hits: tuple[CositeHit, ...]
    excused_by: str = ""

    @property
    def worst(self) -> CositeHit | None:
        """The hit with the lowest margin (hits without a margin count last)."""
        rated = [hit for hit in self.hits if hit.margin_db is not None]
        return min(rated, key=lambda hit: hit.margin_db) if rated else (self.hits[0] if self.hits else None)

    @property
    def figures(self) -> tuple[Figure, ...]:  # type: ignore[override]
        worst = self.worst
        return worst.figures if worst else ()


class CositeIntermod(NamedTuple):
    """An intermodulation product a·f1 + b·f2 of two transmitters landing in a receiver's band, with its
    level and margin where the figures allow; `excused_by` names a suppression line all three share. A named
    tuple: an aircraft has thousands, and tuples are the cheapest to keep in the cache."""

    aircraft: str
    tx_a: str
    tx_b: str
    rx: str
    product: str
    order: int
    f1_mhz: tuple[float, float]
    f2_mhz: tuple[float, float]
    product_mhz: tuple[float, float]
    excused_by: str = ""
    generator: str = ""
    """The transmitter whose output stage makes the product (the one with the larger coefficient)."""
    margin_db: float | None = None
    """The product's margin against the receiver's threshold; None when a figure for its level is missing."""
    figures: tuple[Figure, ...] = ()
    """The level and margin laid out step by step (transmitter intermodulation, conversion-loss model)."""


@dataclass(frozen=True, slots=True)
class AircraftCosite:
    """One aircraft's co-site analysis: every transmitter → receiver path and every intermodulation
    product that lands; `coupling_method` says how the antenna coupling was estimated."""

    aircraft: str
    paths: tuple[CositePath, ...]
    intermod: tuple[CositeIntermod, ...]
    bands: tuple[tuple[str, str, str, tuple[tuple[float, float], ...]], ...] = ()
    """(position, service, "tx" or "rx", ranges in MHz) of every transmitter and receiver."""
    not_analysed: tuple[tuple[str, str], ...] = ()
    """(position, service) of each installation not analysed as a receiver: no protection threshold."""


@dataclass(slots=True)
class AircraftPart:
    """One aircraft's full figures: its installations' and its pairs'. Patterns are shared by the whole
    fleet and kept once apart; the summary (`AircraftSummary`) names them."""

    installations: dict[tuple[str, str], InstallationResult]
    pairs: list[PairResult]
    cosite: AircraftCosite | None = None


class CositeCell(NamedTuple):
    """One transmitter → receiver path reduced to its worst: what a type-wide page needs of it."""

    tx: str
    rx: str
    tx_service: str
    rx_service: str
    margin_db: float | None
    excused_by: str
    what: str
    """The worst hit in words: '13th harmonic, channels 121.108–121.258 MHz (19 at 8.333 kHz)'."""


def cosite_cells(cosite: AircraftCosite | None) -> tuple[CositeCell, ...]:
    """Each path of an aircraft's co-site analysis as its worst: the worst harmonic, or the worst
    intermodulation product the path's transmitter makes in its receiver when that margin is lower."""
    if cosite is None:
        return ()
    products: dict[tuple[str, str], list[CositeIntermod]] = {}
    for item in cosite.intermod:
        if item.margin_db is not None and not item.excused_by:
            products.setdefault((item.generator or item.tx_a, item.rx), []).append(item)
    cells = []
    for path in cosite.paths:
        worst = path.worst
        margin = worst.margin_db if worst is not None else None
        what = f"{worst.product}, {worst.channels}" if worst is not None else ""
        product = min(products.get((path.tx, path.rx), ()), key=lambda item: item.margin_db, default=None)
        if product is not None and not path.excused_by and (margin is None or product.margin_db < margin):
            other = product.tx_b if (product.generator or product.tx_a) == product.tx_a else product.tx_a
            margin, what = product.margin_db, f"intermodulation {product.product} with {other}"
        cells.append(CositeCell(path.tx, path.rx, path.tx_service, path.rx_service, margin, path.excused_by, what))
    return tuple(cells)


FigureUse = tuple[str, str, str, str, str, str]
"""(key, label, unit, formula, source, where): one kind of figure as the methods page lists it."""


def figure_uses(installations: Iterable[InstallationResult], pairs: Iterable[PairResult]) -> dict[FigureUse, int]:
    """How often each kind of figure (`FigureUse`) occurs among these installations' and pairs' figures."""
    uses: Counter = Counter((f.key, f.label, f.unit, f.formula, f.source, "installation")
                            for result in installations for f in result.figures)
    uses.update((f.key, f.label, f.unit, f.formula, f.source, "pair") for pair in pairs for f in pair.figures)
    return dict(uses)


class AircraftSummary(NamedTuple):
    """What the fleet-wide stages need of one aircraft, kept apart from its full figures so that a
    rebuild reads back only this for an aircraft whose pages it does not render again.

    `pattern_of` maps each position to its pattern's content key; `findings` are the rules' discrepancies
    before reviews (None when no rules were run where it was computed); `figure_uses` counts its figures
    by `FigureUse`; `record` is its share of the build record, packed (record.pack_share)."""

    pattern_of: dict[str, str | None]
    findings: tuple[Discrepancy, ...] | None
    figure_uses: dict[FigureUse, int]
    record: tuple[str, ...] | None = None
    cosite: tuple[CositeCell, ...] = ()
    """Its co-site paths' worst margins, for the airframe type's interference page (`cosite_cells`)."""


@dataclass
class FleetResults:
    """All computed results of one build, keyed for lookup.

    `installations` and `pairs` hold the full figures of the aircraft loaded so far: every aircraft,
    unless the compute stage was asked to leave the full figures of unchanged aircraft in the cache
    (`loader` then reads them when a page needs them: `load`). `summaries` covers every aircraft."""

    installations: dict[tuple[str, str], InstallationResult] = field(default_factory=dict)
    pairs: list[PairResult] = field(default_factory=list)
    patterns: dict[str, PatternResult] = field(default_factory=dict)
    cables: dict[str, CableResult] = field(default_factory=dict)
    cosite: dict[str, AircraftCosite] = field(default_factory=dict)
    """Each loaded aircraft's co-site analysis, by aircraft id."""
    summaries: dict[str, AircraftSummary] = field(default_factory=dict)
    records: dict[str, tuple[str, ...]] = field(default_factory=dict)
    """Each aircraft's share of the build record, packed (record.pack_share) until written."""
    aircraft_keys: dict[str, str] = field(default_factory=dict)
    """Content key of each aircraft's inputs (empty when no cache is kept): equal keys, equal figures."""
    unloaded: set[str] = field(default_factory=set)
    """Aircraft whose full figures are still in the cache."""
    figure_use_of: dict[FigureUse, FigureUse] = field(default_factory=dict, repr=False)
    """One `FigureUse` for all the summaries that count it (each summary read back brings its own copy
    of the same hundred-odd labels, formulas and sources: about 70 MB at 1,000 aircraft)."""
    loader: Callable[[FleetResults, list[str]], None] | None = field(default=None, repr=False)
    """Reads aircraft's full figures into these results (given them, so that it holds no reference back)."""

    def load(self, aircraft_ids: Iterable[str]) -> list[str]:
        """Make sure the full figures of these aircraft are in `installations` and `pairs`; the ids of
        those that had to be read."""
        wanted = [aircraft_id for aircraft_id in aircraft_ids if aircraft_id in self.unloaded]
        if wanted and self.loader is not None:
            self.loader(self, wanted)
        return wanted

    def unload(self, aircraft_id: str, positions: Iterable[str]) -> None:
        """Let go of an aircraft's full figures again (they stay in the cache)."""
        for position in positions:
            self.installations.pop((aircraft_id, position), None)
        self.pairs = [pair for pair in self.pairs if pair.aircraft != aircraft_id]
        self.cosite.pop(aircraft_id, None)
        self.unloaded.add(aircraft_id)


@dataclass(frozen=True, slots=True)
class Discrepancy:
    """One problem found by a rule; `id` is `<aircraft>/<position>/<rule>` and never depends on order."""

    id: str
    rule: str
    severity: str
    aircraft: str
    position: str
    value: float | str | None
    limit: float | str | None
    unit: str
    message: str
    method: str
    src: str
    """`file:line` of the registry value the finding rests on (a figure's `source` is its method's citation)."""
    review: str = "open"
    reviewer: str = ""
    review_comment: str = ""
    review_reference: str = ""
    review_date: str = ""
    """The review's date (ISO), "" without a review."""
    is_open: bool = True
    """Open for the merge gate, the chips and the counts: no review, a reopened one, or a disposition that
    leaves the fault in place (`rulebook.FAULT_REMAINS_STATES`) unless the policy says otherwise."""
