"""The clean pattern: a raw DLO mechanism read as rigid regions and straight yield lines.

Public names: `clean_pattern`, `optimise_pattern`, `simplify_pattern`, `CleanPattern`, `Region`,
`CleanLine`, `Fan`.

A raw mechanism is a P1 field on many triangles and its yield lines are many short
pieces. `clean_pattern` groups the triangles into rigid regions (`regions`), writes them
as a hand-pattern file (`handfile`, the format `hingeline check` reads), checks that file
by the hand check's own work equation (the certificate of the regions' triangulation),
and reads the straight yield lines and fans off the checked field (`lines`).

The pattern is kept only if its work equation agrees with the raw mechanism's load factor
to CERTIFICATE_RTOL: the regions are the mechanism's own planes, so any larger difference
would mean the reading went wrong, and a pattern that disagrees is not shown. Its load
factor is always its own certificate's, never a number carried over from the raw result.

On a fine mesh the pattern as read has many narrow regions (fans, slivers); it is then
simplified (`simplify`: small regions merged into a neighbour) and optimised (`optimise`:
junctions moved). Either makes a new mechanism, shown only once the hand check certifies
it and never with more lines; an optimised pattern is never above the raw mechanism's load
factor, a simplified one at most RISE_MAX above it and then marked so (`above_raw`): the
raw mechanism's load factor is the answer either way.

Units: m, rad, kNm; w m per kNm of factored-load work, positive downward.
May import: `hingeline.model`, `hingeline.geometry`, `hingeline.upper`, `hingeline.check`,
`hingeline.result`, `hingeline.errors`.
"""
from __future__ import annotations

import logging
import time
from dataclasses import dataclass

import numpy as np
import shapely

from ..check import check_pattern, pattern_from_toml
from ..errors import ModelError, SolverError
from ..model import Model
from ..result import Mechanism
from ..upper.certificate import CERTIFICATE_RTOL, slab_region
from .handfile import hand_pattern_text, region_names
from .lines import CleanLine, Fan, clean_lines, find_fans, region_junctions
from .layout import Layout, layout_junctions, layout_of, layout_regions
from .optimise import TIME_BUDGET, optimise_layout
from .tidy import TIDY_SETTINGS, tidy
from .regions import Region, find_regions, thin_rings
from .simplify import ABOVE_LINES, MERGE_AREAS, RISE_MAX, merge_groups, simplify_layout

__all__ = ["CleanLine", "CleanPattern", "Fan", "Region", "clean_pattern", "optimise_pattern", "simplify_pattern"]

log = logging.getLogger(__name__)


@dataclass(frozen=True, eq=False)
class CleanPattern:
    """A mechanism read as a pattern of rigid regions.

    load_factor: the work equation of the pattern (hand check of `hand_pattern`).
    raw_load_factor: the load factor of the mechanism it was read from.
    clean_load_factor: the work equation of the pattern as read, before its junctions were
        moved (equal to load_factor when neither simplified nor optimised). optimised: True
        when the junctions were moved (`optimise`) and the certified load factor fell.
        simplified: True when small regions were merged into their neighbours
        (`simplify_pattern`); the pattern is then a mechanism of its own, certified like
        any other, at most RISE_MAX above the raw mechanism (`above_raw` says when above).
    regions, names, rings: the regions, their names ("R1", ..., "rest 1", ...) and the
        rings written for them (exterior first, m; straight-through corners dropped).
    lines: straight yield lines, most work first; fans: points where many lines end.
    mechanism: the pattern's field, scaled so the scaled loads do 1 kNm of work.
    internal: internal work of that field, kNm. hand_pattern: the pattern file's text.
    """

    load_factor: float
    raw_load_factor: float
    regions: tuple[Region, ...]
    names: tuple[str, ...]
    rings: tuple[tuple[np.ndarray, ...], ...]
    lines: tuple[CleanLine, ...]
    fans: tuple[Fan, ...]
    mechanism: Mechanism
    internal: float
    hand_pattern: str
    clean_load_factor: float = float("nan")
    optimised: bool = False
    simplified: bool = False

    @property
    def above_raw(self) -> bool:
        """True for a simplified pattern whose certified load factor is above the raw
        mechanism's (by at most RISE_MAX): readable, but not the governing upper bound."""
        return self.simplified and self.load_factor > self.raw_load_factor


def _checked(model: Model, regions, rings):
    """(text, HandCheck) of the regions written with `rings`; ModelError if the check refuses."""
    text = hand_pattern_text(model, regions, rings)
    hc = check_pattern(model, pattern_from_toml(text, source="clean pattern"), optimise=False)
    # The file carries its own load factor as a comment, so a reader sees what to expect.
    return hand_pattern_text(model, regions, rings, hc.load_factor), hc


def clean_pattern(model: Model, mech: Mechanism, raw_load_factor: float,
                  optimise: bool = True) -> CleanPattern | None:
    """The clean pattern of `mech` (a mechanism of `model` with load factor `raw_load_factor`),
    or None (logged) when it cannot be read faithfully. With `optimise`, it is then
    simplified and optimised (`simplify_pattern`) or, failing that, optimised as it stands
    (`optimise_pattern`): either replaces it only with fewer lines (simplified) or no more
    (optimised) and a certified load factor not above the raw mechanism's. A simplified
    pattern up to RISE_MAX above it (`above_raw`) replaces that result only when it has at
    most ABOVE_LINES of its lines."""
    cp = _read_pattern(model, mech, raw_load_factor)
    if cp is None or not optimise:
        return cp
    below, above = _guarded(simplify_pattern, model, cp) or (None, None)
    shown = below or _guarded(optimise_pattern, model, cp) or cp
    if above is not None and len(above.lines) <= ABOVE_LINES * len(shown.lines):
        log.info("simplified pattern above the raw mechanism shown: %d lines against %d",
                 len(above.lines), len(shown.lines))
        return above
    return shown


def _guarded(step, model: Model, cp: CleanPattern):
    """step(model, cp), or None (logged) should it fail: both steps are optional."""
    try:
        return step(model, cp)
    except Exception as exc:  # noqa: BLE001 - the clean pattern as read stands
        log.info("pattern %s failed: %s: %s", step.__name__, type(exc).__name__, exc)
        return None


@dataclass(frozen=True, eq=False)
class _Candidate:
    """A layout certified by the hand check: its regions, rings, file text, check and lines."""

    layout: Layout
    regions: list
    rings: list
    text: str
    check: object
    lines: list


def _certified(model: Model, lay: Layout, size: float) -> _Candidate | None:
    """The layout written as a hand-pattern file and checked; None if the check refuses it."""
    regions, rings = layout_regions(lay, size)
    try:
        text, hc = _checked(model, regions, rings)
    except (ModelError, SolverError, shapely.errors.GEOSException) as exc:
        log.info("candidate pattern refused by the hand check: %s", exc)
        return None
    return _Candidate(lay, regions, rings, text, hc, clean_lines(model, hc.mechanism, regions))


def _search(model: Model, lay: Layout, size: float, ceiling: float, max_lines: int) -> _Candidate | None:
    """`lay` optimised (pattern/optimise.py) and tidied with each of TIDY_SETTINGS in turn: the
    first certified result below `ceiling` with at most `max_lines` lines, or None."""
    start = time.monotonic()
    moved = optimise_layout(model, lay, size)
    if moved is None:
        return None
    for k, (merge, sliver, bend) in enumerate(TIDY_SETTINGS):
        if k and time.monotonic() - start > 2 * TIME_BUDGET:
            log.info("pattern optimisation: out of time for further certification attempts")
            break
        new = tidy(model, lay, *moved, size, merge, sliver, bend)
        cand = None if new is None else _certified(model, new, size)
        if cand is None:
            continue
        if cand.check.load_factor >= ceiling * (1.0 - 1e-9):
            log.info("optimised pattern's load factor %.9g is not below %.9g", cand.check.load_factor, ceiling)
        elif len(cand.lines) > max_lines:
            # Lower, but harder to read than the pattern it started from: not what a reviewer wants.
            log.info("optimised pattern (load factor %.9g) has %d lines, more than %d; not shown",
                     cand.check.load_factor, len(cand.lines), max_lines)
        else:
            return cand
    return None


def _size(model: Model) -> float:
    return float(np.hypot(*np.ptp(np.asarray(model.slab.outline), axis=0)))


def _layout_of_pattern(cp: CleanPattern, size: float) -> Layout:
    wmax = max((reg.max_deflection for reg in cp.regions), default=0.0) or 1.0
    return layout_of([list(r) for r in cp.rings], np.array([reg.plane for reg in cp.regions]) / wmax,
                     np.array([reg.at_rest for reg in cp.regions]), size)


def optimise_pattern(model: Model, cp: CleanPattern) -> CleanPattern | None:
    """`cp` with its junctions moved (pattern/optimise.py), certified by the hand check's work
    equation; None unless that certified load factor is below cp's (and the raw mechanism's)
    and it has no more lines than cp (it is meant to be easier to read, not harder)."""
    size = _size(model)
    cand = _search(model, _layout_of_pattern(cp, size), size, min(cp.load_factor, cp.raw_load_factor),
                   len(cp.lines))
    if cand is None:
        log.info("pattern optimisation gained nothing certified; the clean pattern is kept")
        return None
    return _pattern_of(cand, cp, size, simplified=False, moved=True)


def simplify_pattern(model: Model, cp: CleanPattern) -> tuple[CleanPattern | None, CleanPattern | None]:
    """`cp` simplified (pattern/simplify.py: regions below each of MERGE_AREAS of the slab's
    area merged, coarsest first) and then optimised, each candidate certified by the hand
    check: (the first with fewer lines than cp and a load factor not above the raw
    mechanism's, the first with fewer lines found before it whose load factor is above that
    by at most RISE_MAX), either None. A simplified pattern is a mechanism in its own right:
    kept as it stands when low enough, else only once optimised below its ceiling. One above
    the raw mechanism is an upper bound too, but a higher one: marked `above_raw`, the raw
    mechanism's load factor staying the answer."""
    size = _size(model)
    lay = _layout_of_pattern(cp, size)
    ceiling = min(cp.load_factor, cp.raw_load_factor)
    slab_area = float(slab_region(model).area)
    tried, above = set(), None
    for frac in MERGE_AREAS:
        try:
            found = _simplified(model, cp, lay, size, slab_area, frac, ceiling, tried, above is None)
        except (ValueError, np.linalg.LinAlgError, shapely.errors.GEOSException) as exc:
            log.info("simplified pattern (%.3g of the slab's area merged) failed: %s", frac, exc)
            continue
        if found is None:
            continue
        if found.load_factor <= ceiling:
            return found, above
        above = found
    return None, above


def _simplified(model, cp, lay, size, slab_area, frac, ceiling, tried, rise: bool) -> CleanPattern | None:
    """One candidate of `simplify_pattern`: `lay` with regions below `frac` of the slab's area
    merged, with fewer lines than cp and a load factor not above `ceiling` (by RISE_MAX when
    `rise`); None when it is no new candidate or none of its forms passes."""
    group = merge_groups(lay, slab_area, frac)
    key = tuple(group)
    if key in tried:
        return None
    tried.add(key)
    simple = simplify_layout(model, lay, size, group)
    if simple is None:
        return None
    top = ceiling * (1.0 + RISE_MAX) if rise else ceiling
    cand = _certified(model, simple, size)
    if cand is not None:
        log.info("simplified pattern (%.3g of the slab's area merged): %d regions, %d lines, load factor %.9g",
                 frac, len(cand.regions), len(cand.lines), cand.check.load_factor)
        if cand.check.load_factor <= top and len(cand.lines) < len(cp.lines):
            better = _search(model, simple, size, cand.check.load_factor, len(cand.lines))
            if better is None and cand.check.load_factor > ceiling:
                # Not low enough as it stands: perhaps once optimised.
                better = _search(model, simple, size, ceiling, len(cp.lines) - 1)
            return _pattern_of(better or cand, cp, size, simplified=True, moved=better is not None)
    better = _search(model, simple, size, top, len(cp.lines) - 1)
    return None if better is None else _pattern_of(better, cp, size, simplified=True, moved=True)


def _pattern_of(cand: _Candidate, cp: CleanPattern, size: float, simplified: bool, moved: bool) -> CleanPattern:
    hc, regions = cand.check, cand.regions
    log.info("pattern %s: load factor %.9g -> %.9g, %d -> %d regions, %d -> %d lines",
             "simplified" if simplified else "optimised", cp.load_factor, hc.load_factor,
             len(cp.regions), len(regions), len(cp.lines), len(cand.lines))
    return CleanPattern(
        load_factor=hc.load_factor, raw_load_factor=cp.raw_load_factor, regions=tuple(regions),
        names=tuple(region_names(regions)), rings=tuple(tuple(r) for r in cand.rings),
        lines=tuple(cand.lines), fans=tuple(find_fans(cand.lines, layout_junctions(cand.layout), size)),
        mechanism=hc.mechanism, internal=hc.internal, hand_pattern=cand.text,
        clean_load_factor=cp.load_factor, optimised=moved, simplified=simplified)


def _read_pattern(model: Model, mech: Mechanism, raw_load_factor: float) -> CleanPattern | None:
    """The pattern as read off the mechanism (see `clean_pattern`)."""
    regions = find_regions(mech)
    size = float(np.hypot(*np.ptp(np.asarray(model.slab.outline), axis=0)))
    full = [[np.asarray(r.coords)[:-1] for r in (reg.polygon.exterior, *reg.polygon.interiors)]
            for reg in regions]
    # Dropping straight-through corners moves a boundary by at most STRAIGHT_RTOL of the
    # slab's size; should that ever upset the check, the rings as found are tried instead.
    for rings in (thin_rings(regions, size), full):
        try:
            text, hc = _checked(model, regions, rings)
        except (ModelError, SolverError) as exc:
            log.info("clean pattern refused by the hand check: %s", exc)
            continue
        if abs(hc.load_factor - raw_load_factor) <= CERTIFICATE_RTOL * abs(raw_load_factor):
            break
        log.info("clean pattern's load factor %.9g differs from the mechanism's %.9g",
                 hc.load_factor, raw_load_factor)
    else:
        log.warning("the mechanism could not be read as a clean pattern; none is shown")
        return None
    lines = clean_lines(model, hc.mechanism, regions)
    return CleanPattern(
        load_factor=hc.load_factor, raw_load_factor=float(raw_load_factor), regions=tuple(regions),
        names=tuple(region_names(regions)), rings=tuple(tuple(r) for r in rings), lines=tuple(lines),
        fans=tuple(find_fans(lines, region_junctions(mech, regions), size)), mechanism=hc.mechanism, internal=hc.internal,
        hand_pattern=text, clean_load_factor=hc.load_factor)
