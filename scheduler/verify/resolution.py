"""Rule ``visibility``: a planned visit measures something at every sample (DOMAIN.md
sections 3 and 8; CHECKS.md, *Visibilities*; common practice, no source).

At every sample of the visit (every minute and both ends), at least one baseline of the
lines in use must measure the target: with the projected length ``b = sqrt(|B|^2 - w^2)``
(``w = B.s``, s from astropy's direction) and ``x = pi theta b / lambda`` at the
wavelength of the target's catalog mode, x lies inside the first null of the disk model
(uniform, or linearly limb-darkened when the catalog gives a coefficient) and
``V^2 >= limits.min_squared_visibility``.  A target of unknown diameter, or whose mode is
not the array's (rule ``mode``), is not judged, nor are lines too few to form a
baseline.  Projected lengths lean towards the plan by :data:`VIS_DIR_TOL_RAD`.
"""

from __future__ import annotations

import math

import numpy as np

from scheduler.model.array import ArrayModel
from scheduler.model.targets import MAS_TO_RAD, Targets
from scheduler.model.times import iso_utc
from scheduler.verify.declared import LineSet
from scheduler.verify.document import Entry
from scheduler.verify.geometry import (
    baseline_pairs,
    first_null_x,
    limb_darkened_disk,
    measures,
    projected_lengths,
)
from scheduler.verify.observing import catalog_mode
from scheduler.verify.report import Violation
from scheduler.verify.sky import Track
from scheduler.verify.tolerances import VIS_DIR_TOL_RAD


def _best(x: np.ndarray, u: float, names: tuple[str, ...]) -> str:
    """The best baseline at one sample (x per baseline), in words."""
    inside = x < first_null_x(u)
    if not inside.any():
        return "every baseline is past the first null"
    v2 = np.where(inside, limb_darkened_disk(x, u) ** 2, -1.0)
    k = int(np.argmax(v2))
    return f"the best inside the first null, {names[k]}, has V^2 = {float(v2[k]):.4f}"


def visibility_violations(v: Entry, tr: Track, targets: Targets, array: ArrayModel,
                          lines: LineSet) -> list[Violation]:  # fmt: skip
    """The samples of visit ``v`` at which no baseline measures its target."""
    i = targets.index(v.target)
    theta = float(targets.diameter_rad[i])
    mode = catalog_mode(array, targets, i)
    names, vectors = baseline_pairs(lines.stations, lines.position_m)
    if math.isnan(theta) or mode is None or len(names) == 0:
        return []
    u = float(targets.limb_darkening[i])
    u = 0.0 if math.isnan(u) else u
    floor = array.limits.min_squared_visibility
    x = math.pi * theta * projected_lengths(tr.s, vectors, VIS_DIR_TOL_RAD) / mode.wavelength_m
    blind = np.asarray(~measures(x, u, floor).any(axis=1))
    if not blind.any():
        return []
    k = int(np.argmax(blind))
    return [Violation("visibility", v.id, f"{v.target} ({theta / MAS_TO_RAD:.3f} mas at "
                      f"{mode.wavelength_m * 1e6:g} um) is measured by no baseline at "
                      f"{int(blind.sum())} of {blind.size} samples, from "
                      f"{iso_utc(float(tr.t_s[k]))}: {_best(x[k], u, names)} (the floor is "
                      f"V^2 = {floor:g})")]  # fmt: skip
