"""Targets as parallel arrays, and the kind of a target.

SI inside: radians, seconds.  Loaded and validated by :mod:`scheduler.inputs.catalog`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields
from enum import StrEnum

import numpy as np
import pandas as pd

MAS_TO_RAD = math.pi / (180.0 * 3600.0 * 1000.0)


class Kind(StrEnum):
    """What a target (and each of its visits) is for."""

    SCIENCE = "science"
    CALIBRATOR = "calibrator"


@dataclass(frozen=True, eq=False)
class Targets:
    """N targets as parallel arrays.

    ``ra_rad``/``dec_rad`` are ICRS at epoch J2000.0; ``pm_ra_rad_yr`` includes the
    cos(dec) factor.  ``window_start_s``/``window_end_s`` are POSIX UTC seconds of a
    target's own time-critical window, NaN where it has none.  ``diameter_rad`` and
    ``mag`` are NaN where not given.  A science target wants ``visits`` visits and earns
    its value only once ``min_visits`` of them are made.  ``extra`` keeps the catalog's
    other columns.
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
            elif isinstance(v, tuple):
                pick[f.name] = tuple(v[i] for i in pick_idx)
            elif isinstance(v, pd.DataFrame):
                pick[f.name] = v.iloc[pick_idx].reset_index(drop=True)
            else:
                pick[f.name] = v
        return Targets(**pick)  # type: ignore[arg-type]
