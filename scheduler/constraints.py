"""Every observing constraint at once, for any (target, time) pairs.

Pure numpy over the arrays prepared once per night (:class:`SkyContext`).  The result
of :func:`evaluate` holds the geometry (altitude, azimuth, projected paths, K span) and
a reason code per pair: 0 where everything holds, else the first constraint that fails
in this order: altitude below the limit, above the limit, a station's horizon mask, the
Sun too close, the Moon too close (while it is up), delay range, the target's own time
window.  :meth:`SkyContext.reason` turns a code into words.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.catalog import Targets
from scheduler.delay import OffsetSpan, offset_span, projected_path
from scheduler.ephemeris import apparent_places
from scheduler.horizon import mask_altitude
from scheduler.model import ArrayModel, Beams, Limits, Overheads
from scheduler.night import Night
from scheduler.sky import altaz, enu_from_cirs, grid_enu, separation

ARCSEC = np.pi / (180.0 * 3600.0)

OK, LOW, HIGH, SUN, MOON, TIME_WINDOW = 0, 1, 2, 3, 4, 5
HORIZON_BASE = 100  # + station index
DELAY_BASE = 1000  # + high_line * L + low_line


@dataclass(frozen=True)
class Margins:
    """Safety margins the planner keeps inside every limit, so that a plan stays valid
    under the verifier's independent geometry (which agrees with the fast path to well
    under an arcsecond and a millimetre)."""

    altitude_rad: float = 2.0 * ARCSEC
    delay_m: float = 0.002


@dataclass(frozen=True, eq=False)
class SkyContext:
    """Everything the constraints need for one night, configuration and catalog."""

    night: Night
    beams: Beams
    targets: Targets
    limits: Limits
    ri_rad: np.ndarray
    di_rad: np.ndarray
    margins: Margins = Margins()
    array_overheads: Overheads = Overheads()

    @classmethod
    def prepare(
        cls, array: ArrayModel, beams: Beams, targets: Targets, night: Night,
        margins: Margins = Margins(),
    ) -> SkyContext:  # fmt: skip
        ri, di = apparent_places(targets, night.frame.t_ref_s)
        return cls(night, beams, targets, array.limits, ri, di, margins, array.overheads)

    def reason(self, code: int) -> str:
        """Words for a reason code."""
        lim = self.limits
        if code == OK:
            return "observable"
        if code == LOW:
            return f"below {np.degrees(lim.min_altitude_rad):.0f} deg altitude"
        if code == HIGH:
            return f"above {np.degrees(lim.max_altitude_rad):.0f} deg altitude"
        if code == SUN:
            return f"within {np.degrees(lim.sun_separation_min_rad):.0f} deg of the Sun"
        if code == MOON:
            return f"within {np.degrees(lim.moon_separation_min_rad):.0f} deg of the Moon"
        if code == TIME_WINDOW:
            return "outside its time-critical window"
        if HORIZON_BASE <= code < DELAY_BASE:
            return f"horizon mask of station {self.beams.station_names[code - HORIZON_BASE]}"
        n = len(self.beams)
        high, low = divmod(code - DELAY_BASE, n)
        names = self.beams.line_names
        return f"delay range: {names[high]} at its maximum while {names[low]} at its minimum"

    def short_reason(self, code: int) -> str:
        """A few words for tables: ``delay rail-5/rail-6``, ``horizon jasper``."""
        if code >= DELAY_BASE:
            high, low = divmod(code - DELAY_BASE, len(self.beams))
            return f"delay {self.beams.line_names[high]}/{self.beams.line_names[low]}"
        if code >= HORIZON_BASE:
            return f"horizon {self.beams.station_names[code - HORIZON_BASE]}"
        return {OK: "-", LOW: "altitude", HIGH: "zenith limit", SUN: "Sun", MOON: "Moon",
                TIME_WINDOW: "time window"}[code]  # fmt: skip


@dataclass(frozen=True, eq=False)
class Evaluation:
    """Geometry and verdict for broadcast (target, time) pairs."""

    e: np.ndarray
    n: np.ndarray
    u: np.ndarray
    alt_rad: np.ndarray
    az_rad: np.ndarray
    pds_m: np.ndarray  # (L, ...) projected path p_i . s
    span: OffsetSpan
    code: np.ndarray

    @property
    def ok(self) -> np.ndarray:
        return self.code == OK


def evaluate(ctx: SkyContext, idx, t_s) -> Evaluation:
    """Evaluate every constraint for targets ``idx`` at times ``t_s`` (broadcast)."""
    idx = np.asarray(idx, int)
    t = np.asarray(t_s, float)
    e, n, u = enu_from_cirs(ctx.ri_rad[idx], ctx.di_rad[idx], ctx.night.frame, t)
    return _judge(ctx, idx, t, e, n, u)


def evaluate_grid(ctx: SkyContext, t_s) -> Evaluation:
    """Every target at every time of ``t_s``: arrays of shape (N, T), by the matrix form
    of the fast path."""
    t = np.asarray(t_s, float)
    e, n, u = grid_enu(ctx.ri_rad, ctx.di_rad, ctx.night.frame, t)
    return _judge(ctx, np.arange(len(ctx.targets))[:, None], t[None, :], e, n, u)


def _judge(ctx: SkyContext, idx, t, e, n, u) -> Evaluation:
    lim, m = ctx.limits, ctx.margins
    alt, az = altaz(e, n, u)
    pds = projected_path(ctx.beams, e, n, u)
    span = offset_span(ctx.beams, pds)
    code = np.zeros(alt.shape, int)

    def mark(bad, value):
        np.copyto(code, value, where=(code == OK) & bad)

    mark(alt < lim.min_altitude_rad + m.altitude_rad, LOW)
    mark(alt > lim.max_altitude_rad - m.altitude_rad, HIGH)
    for k, mask in enumerate(ctx.beams.horizons):
        if mask:
            mark(alt < mask_altitude(mask, az) + m.altitude_rad, HORIZON_BASE + k)
    tb = np.asarray(t, float)  # the Sun and Moon depend on time only: broadcast later
    se, sn, su = ctx.night.sun.enu_at(ctx.night.frame, tb)
    mark(separation(e, n, u, se, sn, su) < lim.sun_separation_min_rad, SUN)
    me, mn, mu = ctx.night.moon_enu(tb)
    moon_close = separation(e, n, u, me, mn, mu) < lim.moon_separation_min_rad
    mark(moon_close & (mu > 0.0), MOON)
    if len(ctx.beams):
        delay_code = DELAY_BASE + span.high_line * len(ctx.beams) + span.low_line
        mark(~span.feasible(m.delay_m), delay_code)
    ws, we = ctx.targets.window_start_s[idx], ctx.targets.window_end_s[idx]
    timed = ~np.isnan(ws)
    with np.errstate(invalid="ignore"):
        mark(timed & ((t < ws) | (t > we)), TIME_WINDOW)
    return Evaluation(e, n, u, alt, az, pds, span, code)


def category(code: int) -> str:
    """Coarse family of a reason code: open, altitude, horizon, delay, moon or time."""
    if code == OK:
        return "open"
    if code in (LOW, HIGH):
        return "altitude"
    if code == MOON:
        return "moon"
    if code in (SUN, TIME_WINDOW):
        return "time"
    return "horizon" if code < DELAY_BASE else "delay"
