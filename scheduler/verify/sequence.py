"""Rules on the planned visits in time order (README.md, *The night queue* and
*Replanning during the night*; common practice, no source):

- ``overlap``: no two planned visits overlap (every pair, not only neighbours), and the
  file lists them in time order;
- ``transition``: before each visit there is time for the longer of the telescope slew
  (``max(|d az| the shortest way round, |d alt|) / slew_rate + settle``) and the carriage
  move (``max_i |x_start,i(B) - x_end,i(A)| / rate_i + settle``), then the acquisition,
  then the ``setup_s`` of B's observing mode when A's catalog mode was another.  The
  first visit of a plan starts at least one acquisition after the night starts (the
  night's first mode is set up before it); the first visit of a replan leaves from
  ``start_state`` (the pointing target where it stood then, half a turn of slew when
  unknown; the logged carriage paths, a line with no logged path crossing its whole
  range; the set-up unless the pointing target's mode is B's, charged for an unknown
  pointing when the array has more than one mode).  A visit's stated ``setup_s`` is
  not read: the verifier works the set-up out itself;
- ``closure``: no planned visit overlaps a logged closure;
- ``replan_start``: nothing starts before the replan's ``now`` or its start state;
- ``done``: no done visit is planned again.
"""

from __future__ import annotations

import math
from collections.abc import Callable

from scheduler.model.array import Overheads
from scheduler.model.times import iso_utc
from scheduler.verify.declared import LineSet
from scheduler.verify.document import Entry, PlanDoc, StartState
from scheduler.verify.geometry import azimuth_step, move_s
from scheduler.verify.report import Violation
from scheduler.verify.sky import Sky, Track
from scheduler.verify.tolerances import TIME_TOL_S
from scheduler.verify.visit_rules import stated_paths


def _overlaps(a0: float, a1: float, b0: float, b1: float) -> bool:
    return a0 < b1 - TIME_TOL_S and b0 < a1 - TIME_TOL_S


def overlap_violations(visits: tuple[Entry, ...]) -> list[Violation]:
    """Every overlapping pair, and the first place where the file leaves time order."""
    found = [Violation("overlap", b.id, f"overlaps {a.id} ({iso_utc(a.start_s)}-"
                       f"{iso_utc(a.end_s)})")
             for k, a in enumerate(visits) for b in visits[k + 1:]
             if _overlaps(a.start_s, a.end_s, b.start_s, b.end_s)]  # fmt: skip
    for a, b in zip(visits, visits[1:], strict=False):
        if b.start_s < a.start_s:
            found.append(Violation("overlap", b.id, f"is listed after {a.id} but starts before "
                                   "it: the visits are not in time order"))  # fmt: skip
            break
    return found


def slew_s(alt_a: float, az_a: float, alt_b: float, az_b: float, over: Overheads) -> float:
    """Telescope slew: the larger axis move at the slew rate, plus settling."""
    step = max(float(azimuth_step(az_a, az_b)), abs(alt_b - alt_a))
    return step / over.slew_rate_rad_s + over.settle_s


def _from_state(state: StartState, b: Entry, tr: Track, lines: LineSet, over: Overheads,
                sky: Sky) -> tuple[float, float] | None:  # fmt: skip
    """(slew, carriage) seconds from the start state to visit ``b`` (samples ``tr``)."""
    slew = math.pi / over.slew_rate_rad_s + over.settle_s
    if sky.pointing is not None:
        slew = slew_s(sky.pointing[0], sky.pointing[1], float(tr.alt[0]), float(tr.az[0]), over)
    x_b = stated_paths(b, "opd_start_m", lines)
    if x_b is None:
        return None
    known = state.opd_m or {}
    costs = [abs(x_b[i] - known[ln]) / lines.rate_m_s[i] if known.get(ln) is not None
             else (lines.opd_max_m[i] - lines.opd_min_m[i]) / lines.rate_m_s[i]
             for i, ln in enumerate(lines.names)]  # fmt: skip
    return slew, float(max(costs, default=0.0)) + over.settle_s


def _between(a: Entry, ta: Track, b: Entry, tb: Track, lines: LineSet,
             over: Overheads) -> tuple[float, float] | None:  # fmt: skip
    """(slew, carriage) seconds from the end of ``a`` to the start of ``b``."""
    slew = slew_s(float(ta.alt[-1]), float(ta.az[-1]), float(tb.alt[0]), float(tb.az[0]), over)
    x_a, x_b = stated_paths(a, "opd_end_m", lines), stated_paths(b, "opd_start_m", lines)
    if x_a is None or x_b is None:
        return None
    return slew, move_s(x_a, x_b, lines.rate_m_s) + over.settle_s


SetUp = Callable[[str | None, str], float]
"""Set-up seconds before a visit of a target (second) after one of another (first; None:
unknown)."""


def _short(b: Entry, label: str, gap: float, parts: tuple[float, float], setup: float,
           over: Overheads) -> list[Violation]:  # fmt: skip
    slew, carriage = parts
    need = max(slew, carriage) + over.acquisition_s + setup
    if gap >= need - TIME_TOL_S:
        return []
    mode = f" and the mode set-up ({setup:.0f} s)" if setup > 0.0 else ""
    return [Violation("transition", b.id, f"{gap:.1f} s after {label}, but the slew "
                      f"({slew:.1f} s) or carriage move ({carriage:.1f} s), the acquisition "
                      f"({over.acquisition_s:.0f} s){mode} need {need:.1f} s")]  # fmt: skip


def transition_violations(plan: PlanDoc, order: list[int], lines: LineSet, over: Overheads,
                          sky: Sky, setup: SetUp) -> list[Violation]:  # fmt: skip
    """Each gap before a planned visit (``order``: indices into ``plan.visits`` in time
    order) against the transition it needs (``setup``: the mode set-up).  Visits without
    a sky track (rejected by other rules) are skipped with the gaps around them."""
    found: list[Violation] = []
    for k, j in enumerate(order):
        b, tb = plan.visits[j], sky.tracks.get(j)
        if tb is None:
            continue
        if k > 0:
            a, ta = plan.visits[order[k - 1]], sky.tracks.get(order[k - 1])
            if ta is not None and b.start_s >= a.end_s - TIME_TOL_S:
                parts = _between(a, ta, b, tb, lines, over)
                found += _short(b, a.id, b.start_s - a.end_s, parts, setup(a.target, b.target),
                                over) if parts else []  # fmt: skip
        elif plan.start_state is not None:
            state = plan.start_state
            parts = _from_state(state, b, tb, lines, over, sky)
            found += _short(b, "the start state", b.start_s - state.utc_s, parts,
                            setup(state.pointing, b.target), over) if parts else []  # fmt: skip
        elif b.start_s < plan.night_start_s + over.acquisition_s - TIME_TOL_S:
            after = b.start_s - plan.night_start_s
            found.append(Violation("transition", b.id, f"starts {after:.1f} s after the night "
                                   f"starts; the first acquisition needs "
                                   f"{over.acquisition_s:.0f} s"))
    return found


def replan_violations(plan: PlanDoc) -> list[Violation]:
    """Closures, the replan's start and done visits planned again."""
    found = [Violation("closure", v.id, f"{iso_utc(v.start_s)}-{iso_utc(v.end_s)} overlaps the "
                       f"closure {iso_utc(a)}-{iso_utc(b)}")
             for v in plan.visits for a, b in plan.closures
             if _overlaps(v.start_s, v.end_s, a, b)]  # fmt: skip
    floors = [(t, what) for t, what in ((plan.now_s, "replanned_from.now_utc"),
              (plan.start_state.utc_s if plan.start_state else None, "start_state.utc"))
              if t is not None]  # fmt: skip
    for t, what in floors:
        found += [Violation("replan_start", v.id, f"starts at {iso_utc(v.start_s)}, before "
                            f"{what} {iso_utc(t)}")
                  for v in plan.visits if v.start_s < t - TIME_TOL_S]  # fmt: skip
    if plan.now_s is not None and plan.start_state is not None and (
            plan.start_state.utc_s < plan.now_s - TIME_TOL_S):
        found.append(Violation("replan_start", "start_state.utc", "is earlier than "
                               "replanned_from.now_utc"))  # fmt: skip
    done = {v.id for v in plan.done}
    found += [Violation("done", v.id, "was done already and is planned again")
              for v in plan.visits if v.id in done]  # fmt: skip
    return found


def time_order(visits: tuple[Entry, ...]) -> list[int]:
    """Indices of the planned visits sorted by start (stable for equal starts)."""
    return sorted(range(len(visits)), key=lambda j: (visits[j].start_s, visits[j].end_s))
