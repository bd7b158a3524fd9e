"""The search state of a stroke window: which strokes to run next, and where a longer stroke
is worse (:mod:`esdsurge.studies.stroke` runs them).

Recomputed from the samples at every pass, so that nothing depends on the order in which
samples arrived.
"""

from __future__ import annotations

import math

from scipy.interpolate import PchipInterpolator
from scipy.optimize import brentq

from esdsurge.studies.batch import (
    Point,
    between,
    boundary_estimate,
    crossing,
    on_lattice,
    refine,
)
from esdsurge.studies.check import CAVITY_THRESHOLD

#: lattice of the searched strokes [s]
STEP = 0.1
#: a bracket of at most this many lattice steps is halved rather than interpolated
NARROW = 16
#: a rise of the highest pressure by more than this share of its limit, from one sampled
#: stroke to the next longer one, is reported as "a longer stroke is worse" [-]
WORSE_RATIO = 0.02


def _spill_crossing(
    points: list[Point], a: float, e: float, limit: float, secant: bool
) -> float | None:
    """Where the spill reaches ``limit`` between ``a`` (within) and ``e`` (above).

    Between two coarse samples, by monotone cubic interpolation of every sampled spill
    (``scipy.interpolate.PchipInterpolator``: the spill bends as the stroke grows); once the
    bracket has been narrowed (``secant``), by the straight line through its two ends, which is
    then close to the curve.
    """
    by = {p.value: p.spill for p in points if p.spill is not None}
    if a not in by or e not in by:
        return None
    if secant:
        return crossing(a, by[a] - limit, e, by[e] - limit)
    xs = sorted(by)
    if len(xs) < 2:
        return None
    f = PchipInterpolator(xs, [by[x] for x in xs], extrapolate=False)
    ga, ge = float(f(a)) - limit, float(f(e)) - limit
    if not ga <= 0.0 < ge:
        return None
    return float(brentq(lambda x: float(f(x)) - limit, a, e, xtol=STEP / 20))


class Track:
    """One window search (the nominal case, or the band), recomputed from the samples.

    The window is the run of passing samples nearest the top: its lower end is refined between
    the longest failing stroke below it and the next passing one, its upper end (when a longer
    stroke fails again below the top) between the last passing and the next failing stroke, and
    the spill end between the last stroke within the spill limit and the first above it.
    """

    def __init__(self, spill_limit: float | None, code_top: float | None, scan_top: float):
        self.spill_limit = spill_limit
        self.code_top = code_top
        self.scan_top = scan_top
        self._width: dict[str, float] = {}
        self.update([], False)

    def _refine(
        self,
        name: str,
        bad: float,
        good: float,
        estimate: float | None,
        around: tuple[float, ...] = (0.0, STEP),
        always: bool = False,
    ) -> list[float]:
        """Next samples in a bracket: around the estimate while the bracket is wide and the
        estimates work (or ``always``); halving when it is narrow or the last step shrank it
        little."""
        width = abs(good - bad)
        slow = width > 0.6 * self._width.get(name, math.inf) or width <= NARROW * STEP
        if slow and not always:
            estimate = None
        self._width[name] = width
        out = refine(bad, good, STEP, estimate, around)
        if estimate is None and len(out) == 1:
            self.halved.append((min(bad, good), max(bad, good)))
        return out

    def thirds(self) -> list[float]:
        """In place of a lone halving sample, two samples that cut its bracket in three (for a
        pass that would otherwise run a single stroke on a machine with more processors)."""
        if len(self.halved) != 1 or len(self.requests) != 1:
            return list(self.requests)
        lo, hi = self.halved[0]
        pts = {between(lo, hi, STEP, 1.0 / 3.0), between(lo, hi, STEP, 2.0 / 3.0)}
        return sorted(p for p in pts if p is not None)

    def update(self, points: list[Point], lower_scanned: bool) -> None:
        self.halved: list[tuple[float, float]] = []
        by = {p.value: p for p in points}
        vals = sorted(by)
        req: list[float] = []
        self.need_lower_spill = False
        spill_est: float | None = None
        self.spill_top: float | None = None  # last stroke within the spill limit
        self.spill_fail: float | None = None  # first stroke above it
        self.spill_below_floor = False
        if self.spill_limit is not None:
            limit = self.spill_limit
            exceed = [v for v in vals if (by[v].spill or 0.0) > limit]
            if exceed:
                e = min(exceed)
                below = [v for v in vals if v < e]
                self.spill_fail = e
                if not below:
                    # above the limit at the shortest stroke sampled: below the scan's floor
                    # only once the shorter half of the scan has run
                    self.spill_below_floor = lower_scanned
                    self.need_lower_spill = not lower_scanned
                else:
                    a = max(below)
                    self.spill_top = a
                    est = _spill_crossing(points, a, e, limit, "spill" in self._width)
                    req += self._refine("spill", e, a, est, (-STEP, 0.0, STEP), always=True)
                    spill_est = est
        tops = [self.scan_top if self.code_top is None else self.code_top]
        if self.spill_top is not None:
            tops.append(self.spill_top)
        self.top = min(tops)
        self.fast: float | None = None  # lower end of the window
        self.fast_fail: float | None = None
        self.surge_top: float | None = None  # upper end set by a limit failing again
        self.surge_fail: float | None = None
        self.no_pass = False
        rel = [v for v in vals if v <= self.top + 1e-9]
        passing = [v for v in rel if by[v].ok]
        spill_open = bool(req) or self.need_lower_spill
        self.need_lower = self.need_lower_spill
        if (
            self.spill_below_floor
            or self.need_lower_spill
            or not rel
            or (spill_open and not passing)
        ):
            # with the spill end still open and no passing stroke below it, the window may lie
            # between the longest failing stroke and the spill end: halve that span meanwhile
            failing = [v for v in vals if not by[v].ok and (spill_est is None or v < spill_est)]
            if spill_open and not passing and failing and spill_est is not None:
                mid = between(max(failing), on_lattice(spill_est, STEP), STEP)
                req += [mid] if mid is not None else []
            self.requests = tuple(sorted(set(req)))
            return
        if not passing:
            self.need_lower = not lower_scanned
            self.no_pass = lower_scanned
            self.requests = tuple(sorted(set(req)))
            return
        p_hi = max(passing)
        above = [v for v in rel if v > p_hi]
        if above:
            f = min(above)
            self.surge_top, self.surge_fail = p_hi, f
            req += self._refine("top", f, p_hi, boundary_estimate(points, f, p_hi))
        failing_below = [v for v in rel if v < p_hi and not by[v].ok]
        if failing_below:
            f = max(failing_below)
            p = min(v for v in rel if v > f)
            self.fast, self.fast_fail = p, f
            req += self._refine("fast", f, p, boundary_estimate(points, f, p))
        else:
            self.fast = rel[0]
            self.need_lower = not lower_scanned
        self.requests = tuple(sorted(set(req)))


def worse_places(points: list[Point], top: float) -> list[str]:
    """Places where a longer stroke is worse than a shorter one, up to ``top``: a limit that a
    shorter stroke keeps and a longer one breaks, a vapour cavity that appears, or a highest
    pressure that rises by more than ``WORSE_RATIO`` of its limit (neighbouring samples that
    rise are taken together). Peaks and cavities are compared only where the shorter stroke
    ran whole, and rises only between strokes that both did (a stopped member's figures are
    those reached when it stopped, :class:`~esdsurge.studies.batch.Point`); a provisional pass
    says how far it was run."""
    out: list[str] = []
    pts = [p for p in points if p.value <= top + 1e-9]
    rise: list[Point] = []

    def flush() -> None:
        if len(rise) >= 2:
            a, b = rise[0], rise[-1]
            out.append(
                f"the highest pressure rises from {a.peak_ratio:.0%} to {b.peak_ratio:.0%} of "
                f"its limit from {a.value:g} s to {b.value:g} s"
            )
        rise.clear()

    for p, q in zip(pts, pts[1:], strict=False):
        if p.ok and not q.ok:
            flush()
            what = q.breaches[0].describe() if q.breaches else "a limit breaks"
            keeps = "keeps every limit"
            if p.provisional and p.ran_to is not None:
                keeps += f" as far as it was run ({p.ran_to:.1f} s)"
            out.append(f"{p.value:g} s {keeps} but {q.value:g} s does not: {what}")
        elif not p.partial and p.cavity <= CAVITY_THRESHOLD < q.cavity:
            flush()
            out.append(
                f"a vapour cavity ({q.cavity:.2g} m³) appears at {q.value:g} s that "
                f"{p.value:g} s does not form"
            )
        elif (
            not (p.partial or q.partial)
            and not math.isnan(p.peak_ratio)
            and not math.isnan(q.peak_ratio)
            and q.peak_ratio - p.peak_ratio > WORSE_RATIO
        ):
            if not rise:
                rise.append(p)
            rise.append(q)
        else:
            flush()
    flush()
    return out
