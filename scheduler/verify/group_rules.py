"""Rules over several visits together, planned and done (README.md, *The night queue*;
common practice, no source):

- ``visits_per_target``: no more science visits of a target than its ``visits``;
- ``calibrator_copies``: no more visits of a calibrator than ``calibrator_copies``;
- ``separation``: visits of one target at least ``min_separation_min`` apart (from the
  end of one to the start of the next);
- ``bracket``: each planned science visit that needs calibrators has a suitable
  calibrator visit (planned or done) ending at most ``calibrator_gap`` before it starts,
  and one starting at most ``calibrator_gap`` after it ends (CAL-SCI-CAL); which
  calibrator suits which target: :mod:`scheduler.verify.calibrators`.

The kind of a target is the catalog's; visits of targets missing from the catalog are
left to rule ``catalog``.
"""

from __future__ import annotations

from collections import defaultdict

from scheduler.model.array import ArrayModel
from scheduler.model.plan import PlanSettings
from scheduler.model.targets import Targets
from scheduler.verify.calibrators import Suitability
from scheduler.verify.document import Entry
from scheduler.verify.report import Violation
from scheduler.verify.tolerances import TIME_TOL_S


def _by_target(visits: tuple[Entry, ...], done: tuple[Entry, ...],
               targets: Targets) -> dict[str, list[Entry]]:  # fmt: skip
    groups: dict[str, list[Entry]] = defaultdict(list)
    for v in (*visits, *done):
        if v.target in targets.names:
            groups[v.target].append(v)
    return groups


def count_violations(visits: tuple[Entry, ...], done: tuple[Entry, ...], targets: Targets,
                     calibrator_copies: int,
                     campaign: dict[str, int] | None = None) -> list[Violation]:  # fmt: skip
    """Science targets visited more often than they ask (a campaign's targets: than the
    campaign still wants tonight, ``campaign``), calibrators more often than
    ``calibrator_copies``."""
    found = []
    wanted = campaign or {}
    for name, group in _by_target(visits, done, targets).items():
        i = targets.index(name)
        allowed = wanted.get(name, int(targets.visits[i]))
        if targets.is_science[i] and len(group) > allowed:
            source = "the campaign wants" if name in wanted else "the catalog asks for"
            found.append(Violation("visits_per_target", name,
                                   f"{len(group)} visits (planned and done), {source} "
                                   f"{allowed}"))  # fmt: skip
        if not targets.is_science[i] and len(group) > calibrator_copies:
            found.append(Violation("calibrator_copies", name,
                                   f"{len(group)} visits (planned and done), at most "
                                   f"{calibrator_copies} allowed"))  # fmt: skip
    return found


def separation_violations(visits: tuple[Entry, ...], done: tuple[Entry, ...],
                          targets: Targets) -> list[Violation]:  # fmt: skip
    """Consecutive visits of one target (in time) closer than its minimum separation,
    measured from the end of one to the start of the next (the catalog's separation,
    raised by its hour-angle spread within a night; spreads are also rule
    ``hour_angle_spread``)."""
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


def _reasons(near: list[tuple[int, Entry]], why: Suitability, i: int) -> str:
    """Why the calibrator visits ``near`` do not suit science target ``i``, in words."""
    texts = sorted({f"{c.target}: {why(i, j)}" for j, c in near})
    return f" ({'; '.join(texts)})" if texts else ""


def bracket_violations(visits: tuple[Entry, ...], done: tuple[Entry, ...], targets: Targets,
                       settings: PlanSettings, array: ArrayModel,
                       baseline_m: float) -> list[Violation]:  # fmt: skip
    """Planned science visits that lack a suitable calibrator before or after."""
    known = [v for v in (*visits, *done) if v.target in targets.names]
    cals = [(targets.index(c.target), c) for c in known if not targets.is_science[
        targets.index(c.target)]]  # fmt: skip
    why = Suitability(targets, array, settings, baseline_m)
    gap = settings.calibrator_gap_s + TIME_TOL_S
    found = []
    for v in visits:
        if v.target not in targets.names:
            continue
        i = targets.index(v.target)
        if not (targets.is_science[i] and targets.needs_calibrator[i]):
            continue
        before = [(j, c) for j, c in cals if -TIME_TOL_S <= v.start_s - c.end_s <= gap]
        after = [(j, c) for j, c in cals if -TIME_TOL_S <= c.start_s - v.end_s <= gap]
        for near, side in ((before, "before it starts"), (after, "after it ends")):
            if not any(why(i, j) is None for j, _ in near):
                found.append(Violation("bracket", v.id, f"no suitable calibrator visit within "
                                       f"{settings.calibrator_gap_s / 60.0:.0f} min {side}"
                                       f"{_reasons(near, why, i)}"))  # fmt: skip
    return found
