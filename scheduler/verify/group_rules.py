"""Rules over several visits together, planned and done (README.md, *The night queue*;
common practice, no source):

- ``visits_per_target``: no more science visits of a target than its ``visits``;
- ``calibrator_copies``: no more visits of a calibrator than ``calibrator_copies``;
- ``separation``: visits of one target at least ``min_separation_min`` apart (from the
  end of one to the start of the next);
- ``bracket``: each planned science visit that needs calibrators has a suitable
  calibrator visit (planned or done) ending at most ``calibrator_gap`` before it starts,
  and one starting at most ``calibrator_gap`` after it ends (CAL-SCI-CAL).  A calibrator
  suits a science target when it is within ``calibrator_max_sep`` of it (the angle
  between the catalog positions), within ``calibrator_max_dmag`` when both magnitudes
  are known, and, when its diameter is known, its uniform-disk visibility is at least
  ``calibrator_min_visibility`` on the longest baseline of the lines in use (which
  bounds every projected baseline).

The kind of a target is the catalog's; visits of targets missing from the catalog are
left to rule ``catalog``.
"""

from __future__ import annotations

import math
from collections import defaultdict

from scheduler.model.plan import PlanSettings
from scheduler.model.targets import Targets
from scheduler.verify.document import Entry
from scheduler.verify.geometry import angular_distance, disk_visibility
from scheduler.verify.report import Violation
from scheduler.verify.tolerances import CAL_SEP_TOL_RAD, DMAG_TOL, TIME_TOL_S, VIS_TOL


def _by_target(visits: tuple[Entry, ...], done: tuple[Entry, ...],
               targets: Targets) -> dict[str, list[Entry]]:  # fmt: skip
    groups: dict[str, list[Entry]] = defaultdict(list)
    for v in (*visits, *done):
        if v.target in targets.names:
            groups[v.target].append(v)
    return groups


def count_violations(visits: tuple[Entry, ...], done: tuple[Entry, ...], targets: Targets,
                     calibrator_copies: int) -> list[Violation]:  # fmt: skip
    """Science targets visited more often than they ask, calibrators more often than
    ``calibrator_copies``."""
    found = []
    for name, group in _by_target(visits, done, targets).items():
        i = targets.index(name)
        if targets.is_science[i] and len(group) > int(targets.visits[i]):
            found.append(Violation("visits_per_target", name,
                                   f"{len(group)} visits (planned and done), the catalog asks for "
                                   f"{int(targets.visits[i])}"))  # fmt: skip
        if not targets.is_science[i] and len(group) > calibrator_copies:
            found.append(Violation("calibrator_copies", name,
                                   f"{len(group)} visits (planned and done), at most "
                                   f"{calibrator_copies} allowed"))  # fmt: skip
    return found


def separation_violations(visits: tuple[Entry, ...], done: tuple[Entry, ...],
                          targets: Targets) -> list[Violation]:  # fmt: skip
    """Consecutive visits of one target (in time) closer than its minimum separation,
    measured from the end of one to the start of the next."""
    found = []
    for name, group in _by_target(visits, done, targets).items():
        need = float(targets.min_separation_s[targets.index(name)])
        ordered = sorted(group, key=lambda v: v.start_s)
        for a, b in zip(ordered, ordered[1:], strict=False):
            gap = b.start_s - a.end_s
            if gap < need - TIME_TOL_S:
                found.append(Violation("separation", b.id, f"starts {gap / 60.0:.1f} min after "
                                       f"{a.id} ends; {name} needs {need / 60.0:.1f} min"))
    return found


def suits(sci: int, cal: int, targets: Targets, settings: PlanSettings,
          baseline_m: float) -> bool:  # fmt: skip
    """Does calibrator ``cal`` suit science target ``sci`` (catalog indices)?"""
    t = targets
    sep = float(angular_distance(t.ra_rad[sci], t.dec_rad[sci], t.ra_rad[cal], t.dec_rad[cal]))
    if sep > settings.calibrator_max_sep_rad + CAL_SEP_TOL_RAD:
        return False
    m_sci, m_cal = float(t.mag[sci]), float(t.mag[cal])
    if not (math.isnan(m_sci) or math.isnan(m_cal)):
        if abs(m_sci - m_cal) > settings.calibrator_max_dmag + DMAG_TOL:
            return False
    theta = float(t.diameter_rad[cal])
    if math.isnan(theta):
        return True
    visibility = disk_visibility(theta, baseline_m, settings.wavelength_m)
    return visibility >= settings.calibrator_min_visibility - VIS_TOL


def bracket_violations(visits: tuple[Entry, ...], done: tuple[Entry, ...], targets: Targets,
                       settings: PlanSettings, baseline_m: float) -> list[Violation]:  # fmt: skip
    """Planned science visits that lack a suitable calibrator before or after."""
    known = [v for v in (*visits, *done) if v.target in targets.names]
    cals = [(targets.index(c.target), c) for c in known if not targets.is_science[
        targets.index(c.target)]]  # fmt: skip
    gap = settings.calibrator_gap_s + TIME_TOL_S
    found = []
    for v in visits:
        if v.target not in targets.names:
            continue
        i = targets.index(v.target)
        if not (targets.is_science[i] and targets.needs_calibrator[i]):
            continue
        good = [c for j, c in cals if suits(i, j, targets, settings, baseline_m)]
        before = any(-TIME_TOL_S <= v.start_s - c.end_s <= gap for c in good)
        after = any(-TIME_TOL_S <= c.start_s - v.end_s <= gap for c in good)
        for ok, side in ((before, "before it starts"), (after, "after it ends")):
            if not ok:
                found.append(Violation("bracket", v.id, f"no suitable calibrator visit within "
                                       f"{settings.calibrator_gap_s / 60.0:.0f} min {side}"))
    return found
