"""The clean pattern: a raw DLO mechanism read as rigid regions and straight yield lines.

Public names: `clean_pattern`, `CleanPattern`, `Region`, `CleanLine`, `Fan`.

A raw mechanism is a P1 field on many triangles and its yield lines are many short
pieces. `clean_pattern` groups the triangles into rigid regions (`regions`), writes them
as a hand-pattern file (`handfile`, the format `hingeline check` reads), checks that file
by the hand check's own work equation (the certificate of the regions' triangulation),
and reads the straight yield lines and fans off the checked field (`lines`).

The pattern is kept only if its work equation agrees with the raw mechanism's load factor
to CERTIFICATE_RTOL: the regions are the mechanism's own planes, so any larger difference
would mean the reading went wrong, and a pattern that disagrees is not shown. Its load
factor is always its own certificate's, never a number carried over from the raw result.

Units: m, rad, kNm; w m per kNm of factored-load work, positive downward.
May import: `hingeline.model`, `hingeline.geometry`, `hingeline.upper`, `hingeline.check`,
`hingeline.result`, `hingeline.errors`.
"""
from __future__ import annotations

import logging
import time
from dataclasses import dataclass

import numpy as np

from ..check import check_pattern, pattern_from_toml
from ..errors import ModelError, SolverError
from ..model import Model
from ..result import Mechanism
from ..upper.certificate import CERTIFICATE_RTOL
from .handfile import hand_pattern_text, region_names
from .lines import CleanLine, Fan, clean_lines, find_fans, region_junctions
from .layout import layout_junctions, layout_of, layout_regions
from .optimise import TIME_BUDGET, optimise_layout
from .tidy import TIDY_SETTINGS, tidy
from .regions import Region, find_regions, thin_rings

__all__ = ["CleanLine", "CleanPattern", "Fan", "Region", "clean_pattern", "optimise_pattern"]

log = logging.getLogger(__name__)


@dataclass(frozen=True, eq=False)
class CleanPattern:
    """A mechanism read as a pattern of rigid regions.

    load_factor: the work equation of the pattern (hand check of `hand_pattern`).
    raw_load_factor: the load factor of the mechanism it was read from.
    clean_load_factor: the work equation of the pattern as read, before its junctions were
        moved (equal to load_factor when not optimised). optimised: True when the junctions
        were moved (`optimise`) and the certified load factor fell.
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


def _checked(model: Model, regions, rings):
    """(text, HandCheck) of the regions written with `rings`; ModelError if the check refuses."""
    text = hand_pattern_text(model, regions, rings)
    hc = check_pattern(model, pattern_from_toml(text, source="clean pattern"), optimise=False)
    # The file carries its own load factor as a comment, so a reader sees what to expect.
    return hand_pattern_text(model, regions, rings, hc.load_factor), hc


def clean_pattern(model: Model, mech: Mechanism, raw_load_factor: float,
                  optimise: bool = True) -> CleanPattern | None:
    """The clean pattern of `mech` (a mechanism of `model` with load factor `raw_load_factor`),
    or None (logged) when it cannot be read faithfully. With `optimise`, its junctions are
    then moved to lower the load factor (`optimise_pattern`); the optimised pattern replaces
    it only when its own certified load factor is lower."""
    cp = _read_pattern(model, mech, raw_load_factor)
    if cp is None or not optimise:
        return cp
    try:
        better = optimise_pattern(model, cp)
    except Exception as exc:  # noqa: BLE001 - the optimisation is optional; the clean pattern stands
        log.info("pattern optimisation failed: %s: %s", type(exc).__name__, exc)
        better = None
    return better or cp


def optimise_pattern(model: Model, cp: CleanPattern) -> CleanPattern | None:
    """`cp` with its junctions moved (pattern/optimise.py), certified by the hand check's work
    equation; None unless that certified load factor is below cp's (and the raw mechanism's)
    and it has no more lines than cp (it is meant to be easier to read, not harder)."""
    size = float(np.hypot(*np.ptp(np.asarray(model.slab.outline), axis=0)))
    wmax = max((reg.max_deflection for reg in cp.regions), default=0.0) or 1.0
    lay = layout_of([list(r) for r in cp.rings], np.array([reg.plane for reg in cp.regions]) / wmax,
                    np.array([reg.at_rest for reg in cp.regions]), size)
    start = time.monotonic()
    moved = optimise_layout(model, lay, size)
    if moved is None:
        return None
    ceiling = min(cp.load_factor, cp.raw_load_factor)
    best = None
    for k, (merge, sliver, bend) in enumerate(TIDY_SETTINGS):
        if k and time.monotonic() - start > 2 * TIME_BUDGET:
            log.info("pattern optimisation: out of time for further certification attempts")
            break
        new = tidy(model, lay, *moved, size, merge, sliver, bend)
        if new is None:
            continue
        regions, rings = layout_regions(new, size)
        try:
            text, hc = _checked(model, regions, rings)
        except (ModelError, SolverError) as exc:
            log.info("optimised pattern refused by the hand check: %s", exc)
            continue
        if hc.load_factor < ceiling * (1.0 - 1e-9):
            lines = clean_lines(model, hc.mechanism, regions)
            if len(lines) > len(cp.lines):
                # Lower, but harder to read than the pattern as read: not what a reviewer wants.
                log.info("optimised pattern (load factor %.9g) has %d lines against %d; not shown",
                         hc.load_factor, len(lines), len(cp.lines))
                continue
            best = (new, regions, rings, text, hc, lines)
            break
        log.info("optimised pattern's load factor %.9g is not below %.9g", hc.load_factor, ceiling)
    if best is None:
        log.info("pattern optimisation gained nothing certified; the clean pattern is kept")
        return None
    new, regions, rings, text, hc, lines = best
    log.info("pattern optimised: load factor %.9g -> %.9g, %d -> %d regions",
             cp.load_factor, hc.load_factor, len(cp.regions), len(regions))
    return CleanPattern(
        load_factor=hc.load_factor, raw_load_factor=cp.raw_load_factor, regions=tuple(regions),
        names=tuple(region_names(regions)), rings=tuple(tuple(r) for r in rings), lines=tuple(lines),
        fans=tuple(find_fans(lines, layout_junctions(new), size)), mechanism=hc.mechanism,
        internal=hc.internal, hand_pattern=text, clean_load_factor=cp.load_factor, optimised=True)


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
