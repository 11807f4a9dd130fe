"""Where every visit's target, the Sun and the Moon stand at every sample.

Each checked visit is sampled every :data:`~scheduler.verify.tolerances.SAMPLE_S` from
its start and at its end; all samples of all visits (and a replan's pointing) go through
ONE call of astropy's full ICRS -> AltAz transform with proper motion
(:func:`scheduler.astro.reference.star_altaz`).

The Sun and the Moon come from few astropy calls: each body's topocentric apparent hour
angle and declination at nodes every :data:`~scheduler.verify.tolerances.BODY_NODE_S`
seconds (and at both ends).  In a frame that turns with the stars the bodies drift
slowly (the Moon about half a degree an hour, its parallax a little more), so there each
body's unit vector is interpolated linearly between nodes and renormalised; the chord
error over 10 minutes is far below an arcsecond, and the whole stays within about an
arcsecond of astropy's direct transform (tested).  The frame: a right ascension
``alpha = theta - H`` with ``theta`` turning at the Earth's rate from the first node (any
steady turn at that rate serves, since the same ``theta`` takes the hour angle back at
each instant).  Hour angle and declination then give east-north-up vectors by the
verifier's own formula.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from scheduler.astro.reference import body_hadec, star_altaz
from scheduler.model.array import Site
from scheduler.model.targets import MAS_TO_RAD, Targets
from scheduler.verify.geometry import enu_from_altaz, enu_from_hadec, unit_from_radec
from scheduler.verify.tolerances import BODY_NODE_S, SAMPLE_S

EARTH_RATE_RAD_S = 7.292115146706979e-5
"""The Earth's rotation rate (IERS Conventions 2010)."""


def node_times(t_s: np.ndarray, step_s: float = BODY_NODE_S) -> np.ndarray:
    """Nodes every ``step_s`` from the first to the last of ``t_s``, both ends included."""
    lo, hi = float(np.min(t_s)), float(np.max(t_s))
    nodes = np.arange(lo, hi, step_s)
    return np.append(nodes, hi) if (len(nodes) == 0 or nodes[-1] < hi) else nodes


def body_enu(name: str, site: Site, t_s: np.ndarray, step_s: float = BODY_NODE_S) -> np.ndarray:
    """East-north-up unit vectors (N, 3) of ``name`` ("sun" or "moon") at ``t_s``."""
    t = np.asarray(t_s, float)
    if t.size == 0:
        return np.zeros((0, 3))
    nodes = node_times(t, step_s)
    ha, dec = body_hadec(name, math.degrees(site.latitude_rad), math.degrees(site.longitude_rad),
                         site.height_m, nodes)  # fmt: skip
    theta_nodes = EARTH_RATE_RAD_S * (nodes - nodes[0])
    fixed = unit_from_radec(theta_nodes - ha, dec)  # (nodes, 3), slowly varying
    v = np.stack([np.interp(t, nodes, fixed[:, k]) for k in range(3)], axis=-1)
    v /= np.linalg.norm(v, axis=-1, keepdims=True)
    alpha = np.arctan2(v[:, 1], v[:, 0])
    delta = np.arcsin(np.clip(v[:, 2], -1.0, 1.0))
    theta = EARTH_RATE_RAD_S * (t - nodes[0])
    return enu_from_hadec(theta - alpha, delta, site.latitude_rad)


@dataclass(frozen=True, eq=False)
class Track:
    """One visit's samples: instants (n,), target altitude and azimuth (n,), target,
    Sun and Moon unit vectors (n, 3) east-north-up."""

    t_s: np.ndarray
    alt: np.ndarray
    az: np.ndarray
    s: np.ndarray
    sun: np.ndarray
    moon: np.ndarray


@dataclass(frozen=True, eq=False)
class Sky:
    """The tracks by visit key; the pointing's (alt, az), if asked for; the Sun's unit
    vectors at the extra instants asked for (the night's edges)."""

    tracks: dict[int, Track]
    pointing: tuple[float, float] | None
    extra_sun: np.ndarray


def sample_times(start_s: float, end_s: float) -> np.ndarray:
    """Every :data:`SAMPLE_S` from ``start_s``, and ``end_s``."""
    return np.append(np.arange(start_s, end_s, SAMPLE_S), end_s)


def _directions(site: Site, targets: Targets, idx: np.ndarray,
                t_s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:  # fmt: skip
    if len(t_s) == 0:
        return np.zeros(0), np.zeros(0)
    return star_altaz(
        math.degrees(site.latitude_rad), math.degrees(site.longitude_rad), site.height_m,
        np.degrees(targets.ra_rad[idx]), np.degrees(targets.dec_rad[idx]),
        targets.pm_ra_rad_yr[idx] / MAS_TO_RAD, targets.pm_dec_rad_yr[idx] / MAS_TO_RAD, t_s,
    )  # fmt: skip


def observe(site: Site, targets: Targets, visits: dict[int, tuple[int, float, float]],
            pointing: tuple[int, float] | None, extra_s: tuple[float, ...]) -> Sky:  # fmt: skip
    """Sample ``visits`` ({key: (target index, start_s, end_s)}), the ``pointing``
    (target index, instant) and the Sun at ``extra_s``."""
    times = {key: sample_times(a, b) for key, (_, a, b) in visits.items()}
    t_all = np.concatenate([*times.values(), [pointing[1]] if pointing else [], np.zeros(0)])
    idx = np.concatenate([*[np.full(len(t), visits[k][0]) for k, t in times.items()],
                          [pointing[0]] if pointing else [], np.zeros(0)]).astype(int)  # fmt: skip
    alt, az = _directions(site, targets, idx, t_all)
    extra = np.asarray(extra_s, float)
    sun = body_enu("sun", site, np.concatenate([t_all, extra]))
    moon = body_enu("moon", site, t_all)
    tracks, at = {}, 0
    for key, t in times.items():
        cut = slice(at, at + len(t))
        tracks[key] = Track(t, alt[cut], az[cut], enu_from_altaz(alt[cut], az[cut]), sun[cut],
                            moon[cut])  # fmt: skip
        at += len(t)
    point = (float(alt[at]), float(az[at])) if pointing else None
    return Sky(tracks, point, sun[len(t_all):])
