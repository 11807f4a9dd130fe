"""Is a target bright enough for its mode tonight?  Pure arithmetic on the catalog's
magnitudes and the modes' limits under the conditions (:mod:`.conditions`).

A target whose magnitude in a mode's band is unknown cannot be judged and is not held
back; the calibrator magnitude rule uses the tracking-band magnitude (the ``mag_<band>``
column of the mode's tracking band, else the catalog's plain ``mag``).
"""

from __future__ import annotations

import numpy as np

from scheduler.model.array import ArrayModel, Mode
from scheduler.model.conditions import Conditions, guiding_limit, tracking_limit
from scheduler.model.reasons import Limit, faint_code
from scheduler.model.targets import Targets

TRACKING, GUIDING = 0, 1  # the detail of a FAINT reason code


def mode_indices(targets: Targets, array: ArrayModel) -> np.ndarray:
    """Each target's mode, as an index into ``array.modes`` (unknown names: the first;
    they are reported as input problems before any planning)."""
    names = {m.name: k for k, m in enumerate(array.modes)}
    return np.array([names.get(m, 0) for m in targets.mode], int)


def band_magnitudes(targets: Targets, modes: tuple[Mode, ...], mode_index: np.ndarray,
                    tracking: bool) -> np.ndarray:  # fmt: skip
    """Each target's magnitude in its mode's tracking (or guiding) band, NaN if unknown;
    the plain ``mag`` column stands for the tracking band (so also for guiding when
    both use one band)."""
    out = np.full(len(targets), np.nan)
    for k, mode in enumerate(modes):
        here = mode_index == k
        band = mode.tracking_band if tracking else mode.guiding_band
        values = targets.magnitude(band)
        if band == mode.tracking_band:  # the plain mag is the tracking band's
            values = np.where(np.isnan(values), targets.mag, values)
        out[here] = values[here]
    return out


def limits_of(modes: tuple[Mode, ...], mode_index: np.ndarray,
              conditions: Conditions) -> tuple[np.ndarray, np.ndarray]:  # fmt: skip
    """(tracking, guiding) limiting magnitude of each target's mode under ``conditions``."""
    track = np.array([tracking_limit(m, conditions) for m in modes])[mode_index]
    guide = np.array([guiding_limit(m, conditions) for m in modes])[mode_index]
    return track, guide


def faint_codes(targets: Targets, array: ArrayModel, conditions: Conditions) -> np.ndarray:
    """Per target: 0 when bright enough (or unknown), else the FAINT reason code of the
    first limit it misses (fringe tracking, then guiding)."""
    return faint_codes_of(targets, array.modes, mode_indices(targets, array), conditions)


def faint_codes_of(targets: Targets, modes: tuple[Mode, ...], index: np.ndarray,
                   conditions: Conditions) -> np.ndarray:  # fmt: skip
    """:func:`faint_codes` from the modes and each target's mode index."""
    track_lim, guide_lim = limits_of(modes, index, conditions)
    track = band_magnitudes(targets, modes, index, True)
    guide = band_magnitudes(targets, modes, index, False)
    with np.errstate(invalid="ignore"):
        too_faint_track = track > track_lim
        too_faint_guide = guide > guide_lim
    out = np.zeros(len(targets), int)
    out[too_faint_guide] = faint_code(GUIDING)
    out[too_faint_track] = faint_code(TRACKING)
    return np.where(out != 0, out, int(Limit.OK))
