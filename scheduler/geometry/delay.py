"""Delay geometry: what each delay line must add, and when that is possible.

Pure numpy (DOMAIN.md section 3).  For line i fed by station p_i (ENU, metres) with
constant path ``path_i = a_i + f_i`` (internal path plus fixed offset), the optical
path the line adds is ``x_i = K + p_i . s - path_i``; K is one free constant common to
all lines.  The station nearer the star (larger ``p . s``) needs more internal path.
Feasibility needs K in ``[max_i(opd_min_i + path_i - p_i . s),
min_i(opd_max_i + path_i - p_i . s)]``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.geometry.sky import enu_rate
from scheduler.model.array import Beams
from scheduler.model.frames import OMEGA_EARTH_RAD_S


def projected_path(beams: Beams, e, n, u) -> np.ndarray:
    """``p_i . s`` in metres, shape ``(L,) + broadcast(e, n, u).shape``."""
    p = beams.position_enu_m
    shape = (len(beams),) + (1,) * np.ndim(e)
    return p[:, 0].reshape(shape) * e + p[:, 1].reshape(shape) * n + p[:, 2].reshape(shape) * u


@dataclass(frozen=True, eq=False)
class OffsetSpan:
    """The feasible interval of the common constant K (metres) at each sample.

    ``low_line``/``high_line`` index the lines that set each bound: when the span is
    empty, ``high_line`` would need more than its maximum path while ``low_line`` sits
    at its minimum.
    """

    low_m: np.ndarray
    high_m: np.ndarray
    low_line: np.ndarray
    high_line: np.ndarray

    @property
    def width_m(self) -> np.ndarray:
        return self.high_m - self.low_m

    def feasible(self, margin_m: float = 0.0) -> np.ndarray:
        return self.width_m >= 2.0 * margin_m


def offset_span(beams: Beams, pds_m: np.ndarray) -> OffsetSpan:
    """K interval from projected paths ``pds_m`` (L, ...) as given by
    :func:`projected_path`."""
    shape = (len(beams),) + (1,) * (pds_m.ndim - 1)
    base = beams.path_m.reshape(shape) - pds_m
    lo = beams.opd_min_m.reshape(shape) + base
    hi = beams.opd_max_m.reshape(shape) + base
    return OffsetSpan(lo.max(axis=0), hi.min(axis=0), lo.argmax(axis=0), hi.argmin(axis=0))


def line_paths(beams: Beams, pds_m: np.ndarray, k_m) -> np.ndarray:
    """Optical path ``x_i = K + p_i . s - path_i`` each line adds (L, ...), metres."""
    shape = (len(beams),) + (1,) * (pds_m.ndim - 1)
    return np.asarray(k_m) + pds_m - beams.path_m.reshape(shape)


def centred_offset(span: OffsetSpan) -> np.ndarray:
    """The middle of the feasible K interval: every carriage as far from its ends as
    the geometry allows (used for pre-positioning tables)."""
    return 0.5 * (span.low_m + span.high_m)


def path_rates(beams: Beams, e, n, u, lat_rad: float) -> np.ndarray:
    """d(p_i . s)/dt in m/s (L, ...): the tracking rate of each line with K fixed."""
    de, dn, du = enu_rate(e, n, u, lat_rad)
    return projected_path(beams, de, dn, du)


def max_tracking_rate_m_s(baseline_m: float) -> float:
    """Upper bound of a delay rate for a baseline of this length: omega * B."""
    return OMEGA_EARTH_RAD_S * baseline_m


def equatorial_baseline(enu_m, lat_rad: float) -> np.ndarray:
    """ENU baseline to the equatorial frame (Lx, Ly, Lz) of Thompson, Moran & Swenson
    ch. 4: X toward (H=0, dec=0), Y toward H=-6h, Z the pole."""
    e, n, u = np.moveaxis(np.asarray(enu_m, float), -1, 0)
    sl, cl = np.sin(lat_rad), np.cos(lat_rad)
    return np.stack([-sl * n + cl * u, e, cl * n + sl * u], axis=-1)


def uvw(enu_m, lat_rad: float, ha_rad, dec_rad):
    """Baseline coordinates (u, v, w) in metres (TMS ch. 4); ``w`` equals b . s."""
    lx, ly, lz = np.moveaxis(equatorial_baseline(enu_m, lat_rad), -1, 0)
    sh, ch = np.sin(ha_rad), np.cos(ha_rad)
    sd, cd = np.sin(dec_rad), np.cos(dec_rad)
    u = sh * lx + ch * ly
    v = -sd * ch * lx + sd * sh * ly + cd * lz
    w = cd * ch * lx - cd * sh * ly + sd * lz
    return u, v, w


def baseline_pairs(beams: Beams) -> tuple[np.ndarray, np.ndarray]:
    """Index pairs (i, j), i < j, of the lines in use: one per baseline."""
    i, j = np.triu_indices(len(beams), k=1)
    return i, j


def baseline_names(beams: Beams) -> list[str]:
    """``quartz-opal`` for each baseline, in the order of :func:`baseline_pairs`."""
    i, j = baseline_pairs(beams)
    return [f"{beams.station_names[a]}-{beams.station_names[b]}" for a, b in zip(i, j, strict=True)]


def projected_baselines(beams: Beams, pds_m: np.ndarray) -> np.ndarray:
    """Projected baseline lengths sqrt(|B|^2 - w^2) (P, ...) in metres, with w = B . s
    the difference of the stations' projected paths (Thompson, Moran & Swenson ch. 4)."""
    i, j = baseline_pairs(beams)
    b = beams.position_enu_m[j] - beams.position_enu_m[i]
    length2 = np.sum(b * b, axis=1).reshape((len(i),) + (1,) * (pds_m.ndim - 1))
    w = pds_m[j] - pds_m[i]
    return np.sqrt(np.maximum(length2 - w * w, 0.0))
