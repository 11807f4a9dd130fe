"""Which sky the delay lines reach, for many set-up choices at once.

Pure numpy.  A *choice* feeds each station ``s`` of a configuration into one delay line
``sigma(s)`` and inserts a fixed delay ``f`` on each line.  With the terms of
:mod:`scheduler.geometry.delay` (``x_i = K + p_i . s - a_i - f_i``), station ``s`` on
line ``l`` needs ``K`` in ``[lo_l - d_s, hi_l - d_s]`` where ``lo_l = opd_min_l + f_l``,
``hi_l = opd_max_l + f_l`` and ``d_s = p_s . s - a_s`` (its projected path less its
internal path).  The span of K is therefore

    low = max_s (lo_sigma(s) - d_s),    high = min_s (hi_sigma(s) - d_s),

a max and a min over the configuration's stations: cheap for thousands of choices at
once.  The *headroom* of a sample is half the span's width, ``(high - low) / 2``: with K
centred, every carriage is at least that far (optical path, metres) from an end of its
range.  Negative headroom: no K works, some carriage would run past an end.

The reach map samples hour angle and declination directly (no refraction, aberration or
precession: the map is a picture of the site's sky, each target's track is drawn on it
from its apparent place).
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from scheduler.geometry.delay import offset_span, projected_path
from scheduler.geometry.sky import altaz, enu_from_hadec
from scheduler.model.array import Beams

CHUNK_CHOICES = 32  # choices per step of :func:`headroom_chunks` (temporaries stay small)


def station_terms(beams: Beams, pds_m: np.ndarray) -> np.ndarray:
    """``d_s = p_s . s - a_s`` (S, ...) from the projected paths ``pds_m`` (S, ...)
    of :func:`~scheduler.geometry.delay.projected_path`, metres."""
    shape = (len(beams),) + (1,) * (pds_m.ndim - 1)
    return pds_m - beams.internal_path_m.reshape(shape)


def headroom_chunks(lo_m: np.ndarray, hi_m: np.ndarray,
                    d_m: np.ndarray) -> Iterator[tuple[int, int, np.ndarray]]:  # fmt: skip
    """Headroom, metres, of choices whose station ``s`` has line constants
    ``lo_m[c, s]``, ``hi_m[c, s]`` (C, S), at samples with station terms ``d_m`` (S, N):
    ``(a, b, room)`` with ``room`` (b - a, N) for choices ``a`` to ``b``, in chunks of
    :data:`CHUNK_CHOICES`, computed station by station in place."""
    count = lo_m.shape[0]
    for a in range(0, count, CHUNK_CHOICES):
        b = min(count, a + CHUNK_CHOICES)
        low = lo_m[a:b, 0, None] - d_m[0]
        high = hi_m[a:b, 0, None] - d_m[0]
        tmp = np.empty_like(low)
        for s in range(1, d_m.shape[0]):
            np.maximum(low, np.subtract(lo_m[a:b, s, None], d_m[s], out=tmp), out=low)
            np.minimum(high, np.subtract(hi_m[a:b, s, None], d_m[s], out=tmp), out=high)
        np.subtract(high, low, out=high)
        high *= 0.5
        yield a, b, high


@dataclass(frozen=True)
class ReachMap:
    """A choice's reachable sky on a grid of hour angle (columns) and declination
    (rows), radians: ``headroom_m`` (rows, columns), metres, NaN where the altitude is
    outside its limits; ``reachable`` where the altitude is inside and the headroom at
    least ``margin_m``."""

    ha_rad: np.ndarray
    dec_rad: np.ndarray
    headroom_m: np.ndarray
    reachable: np.ndarray


def headroom_at(beams: Beams, lat_rad: float, ha_rad, dec_rad) -> np.ndarray:
    """Headroom (metres) of ``beams`` towards hour angle / declination (broadcast)."""
    e, n, u = enu_from_hadec(ha_rad, dec_rad, lat_rad)
    span = offset_span(beams, projected_path(beams, e, n, u))
    return 0.5 * span.width_m


def reach_map(beams: Beams, lat_rad: float, alt_limits_rad: tuple[float, float],
              ha_rad: np.ndarray, dec_rad: np.ndarray, margin_m: float) -> ReachMap:  # fmt: skip
    """The :class:`ReachMap` of ``beams`` at latitude ``lat_rad`` on the given axes."""
    ha, dec = np.meshgrid(ha_rad, dec_rad)
    alt, _ = altaz(*enu_from_hadec(ha, dec, lat_rad))
    room = headroom_at(beams, lat_rad, ha, dec)
    inside = (alt >= alt_limits_rad[0]) & (alt <= alt_limits_rad[1])
    room = np.where(inside, room, np.nan)
    return ReachMap(np.asarray(ha_rad), np.asarray(dec_rad), room,
                    inside & (room >= margin_m))  # fmt: skip


def sky_axes(lat_rad: float, min_alt_rad: float, ha_step_rad: float,
             dec_step_rad: float) -> tuple[np.ndarray, np.ndarray]:  # fmt: skip
    """Hour angles from -12 h to +12 h and the declinations that ever rise above
    ``min_alt_rad`` at latitude ``lat_rad`` (|dec - lat| <= 90 deg - min_alt)."""
    reach = 0.5 * np.pi - min_alt_rad
    lo, hi = max(-0.5 * np.pi, lat_rad - reach), min(0.5 * np.pi, lat_rad + reach)
    ha = np.linspace(-np.pi, np.pi, int(round(2 * np.pi / ha_step_rad)) + 1)
    dec = np.linspace(lo, hi, max(2, int(round((hi - lo) / dec_step_rad)) + 1))
    return ha, dec
