"""Targets as parallel arrays, and the kind of a target.

SI inside: radians, seconds.  Loaded and validated by :mod:`scheduler.inputs.catalog`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, fields
from enum import StrEnum

import numpy as np
import pandas as pd

MAS_TO_RAD = math.pi / (180.0 * 3600.0 * 1000.0)


class Kind(StrEnum):
    """What a target (and each of its visits) is for."""

    SCIENCE = "science"
    CALIBRATOR = "calibrator"


HOUR_ANGLE_RAD_PER_H = np.pi / 12.0
SIDEREAL_PER_SOLAR = 1.00273790935  # hour angle advances this much faster than UTC


def spread_separation_s(separation_s: np.ndarray, spread_rad: np.ndarray,
                        duration_s: np.ndarray) -> np.ndarray:  # fmt: skip
    """The gap between two visits of one night that keeps their mid-visit hour angles
    ``spread_rad`` apart: the hour angle moves at the sidereal rate and mid-visits are a
    visit length plus the gap apart, so the gap is at least
    ``spread / sidereal rate - duration`` (and at least ``separation_s``)."""
    needed = spread_rad / (2 * np.pi / 86400.0 * SIDEREAL_PER_SOLAR) - duration_s
    return np.where(spread_rad > 0, np.maximum(separation_s, needed), separation_s)


@dataclass(frozen=True, eq=False)
class Targets:
    """N targets as parallel arrays.

    ``ra_rad``/``dec_rad`` are ICRS at epoch J2000.0; ``pm_ra_rad_yr`` includes the
    cos(dec) factor.  ``window_start_s``/``window_end_s`` are POSIX UTC seconds of a
    target's own time-critical window, NaN where it has none.  ``diameter_rad`` and
    ``mag`` are NaN where not given; ``mag`` is the magnitude in the tracking band of
    the target's ``mode`` (empty: the array's first mode), ``band_mags`` the magnitudes
    per band (``mag_H``, ``mag_V``, ... columns), ``diameter_err_rad`` the diameter's
    uncertainty and ``limb_darkening`` a linear limb-darkening coefficient (NaN: a
    uniform disk); ``row`` is each target's line in its file.  A science target wants
    ``visits`` visits and earns its value only once ``min_visits`` of them are made.
    ``ha_spread_rad``: the least hour-angle difference (rad, mid-visit to mid-visit)
    between any two visits of the target, tonight's and those of earlier nights (0: none;
    within a night it raises ``min_separation_s``, see :func:`spread_separation_s`).
    ``value_weight`` scales what a visit earns and how the greedy queue ranks it (1;
    a campaign lowers it as a target's coverage fills, see
    :mod:`scheduler.queue.campaign`).  ``extra`` keeps the catalog's other columns.
    """

    names: tuple[str, ...]
    ra_rad: np.ndarray
    dec_rad: np.ndarray
    pm_ra_rad_yr: np.ndarray
    pm_dec_rad_yr: np.ndarray
    is_science: np.ndarray
    program: tuple[str, ...]
    priority: np.ndarray
    duration_s: np.ndarray
    visits: np.ndarray
    min_visits: np.ndarray
    min_separation_s: np.ndarray
    needs_calibrator: np.ndarray
    mag: np.ndarray
    diameter_rad: np.ndarray
    window_start_s: np.ndarray
    window_end_s: np.ndarray
    extra: pd.DataFrame
    source: str = ""
    mode: tuple[str, ...] = ()
    band_mags: tuple[tuple[str, np.ndarray], ...] = ()
    diameter_err_rad: np.ndarray = field(default_factory=lambda: np.zeros(0))
    limb_darkening: np.ndarray = field(default_factory=lambda: np.zeros(0))
    row: np.ndarray = field(default_factory=lambda: np.zeros(0, int))
    ha_spread_rad: np.ndarray = field(default_factory=lambda: np.zeros(0))
    value_weight: np.ndarray = field(default_factory=lambda: np.zeros(0))

    def __post_init__(self) -> None:  # catalogs built in code may leave these out
        n = len(self.names)
        if len(self.mode) != n:
            object.__setattr__(self, "mode", ("",) * n)
        for name, fill in (("diameter_err_rad", np.nan), ("limb_darkening", np.nan),
                           ("row", 0), ("ha_spread_rad", 0.0),
                           ("value_weight", 1.0)):  # fmt: skip
            if len(getattr(self, name)) != n:
                object.__setattr__(self, name, np.full(n, fill))

    def magnitude(self, band: str) -> np.ndarray:
        """Magnitudes in ``band`` (NaN where unknown)."""
        for b, values in self.band_mags:
            if b == band:
                return values
        return np.full(len(self.names), np.nan)

    def __len__(self) -> int:
        return len(self.names)

    def index(self, name: str) -> int:
        """Position of ``name``; KeyError naming the catalog otherwise."""
        try:
            return self.names.index(name)
        except ValueError:
            raise KeyError(f"target {name!r} is not in {self.source or 'the catalog'}") from None

    def kind(self, i: int) -> Kind:
        return Kind.SCIENCE if self.is_science[i] else Kind.CALIBRATOR

    def is_time_critical(self, i: int) -> bool:
        return not math.isnan(float(self.window_start_s[i]))

    def subset(self, idx: np.ndarray | list[int]) -> Targets:
        """The targets at integer positions (or boolean mask) ``idx``, in that order."""
        arr = np.asarray(idx)
        pick_idx = np.flatnonzero(arr) if arr.dtype == bool else arr.astype(int)
        pick: dict[str, object] = {}
        for f in fields(self):
            v = getattr(self, f.name)
            if isinstance(v, np.ndarray):
                pick[f.name] = v[pick_idx]
            elif f.name == "band_mags":
                pick[f.name] = tuple((b, values[pick_idx]) for b, values in v)
            elif isinstance(v, tuple):
                pick[f.name] = tuple(v[i] for i in pick_idx)
            elif isinstance(v, pd.DataFrame):
                pick[f.name] = v.iloc[pick_idx].reset_index(drop=True)
            else:
                pick[f.name] = v
        return Targets(**pick)  # type: ignore[arg-type]
