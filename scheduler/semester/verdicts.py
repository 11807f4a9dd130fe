"""The committee's answer per request and per programme, from the realisations.

A request *completes* in a realisation when its hours done reach its hours asked; its
completion probability is the fraction of realisations where it does, quoted with its
standard error ``sqrt(p (1 - p) / N)``.  A programme completes when all its requests do
in the same realisation.  Verdicts: *fits* at a completion probability of at least
:data:`FITS_AT`, *at risk* down to :data:`AT_RISK_AT`, *does not fit* below (our rule;
common practice, no source).

A shortfall gets the first reason that explains it, in this order, each comparing the
visits the request needs with the visit opportunities counted by the realisations
(:mod:`scheduler.semester.realise`):

1. its configuration is not on the array while the target is up, or the target is not
   observable on enough nights (the constraint taking most of its time is named:
   altitude, horizon mask, delay range, Moon, over-resolved, too faint);
2. *weather*: on average fewer open opportunities than visits needed;
3. *conditions*: on average fewer opportunities with the target (and a calibrator)
   bright enough in the drawn seeing and coherence time;
4. otherwise the nights went to *higher-ranked requests* (and to the overheads).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from scheduler.model.reasons import most_limiting
from scheduler.semester.availability import FAMILIES, Availability
from scheduler.semester.pool import Scenario
from scheduler.semester.realise import FIELDS, Outcome

FITS_AT = 0.8
AT_RISK_AT = 0.2
ORDER = {"fits": 0, "at risk": 1, "does not fit": 2}
DONE, CHARGED, CLEAR, OPEN, BRIGHT = (FIELDS.index(f) for f in FIELDS)


@dataclass(frozen=True)
class RequestAnswer:
    """One request: hours asked, clear-sky observable hours, expected hours done and
    charged (calibrators, acquisitions and transitions included), visits needed and the
    mean opportunities, completion probability with its standard error, verdict, the
    reason of a shortfall and the two best ISO weeks."""

    program: str
    target: str
    configuration: str
    requested_hours: float
    clear_hours: float
    expected_hours: float
    charged_hours: float
    visits_needed: int
    opportunities: tuple[float, float, float]  # clear, open, bright (mean visits)
    completion: float
    standard_error: float
    verdict: str
    reason: str
    detail: str
    best_weeks: tuple[str, ...]


@dataclass(frozen=True)
class ProgramAnswer:
    """One programme: its requests (those not fitting first) and their totals."""

    program: str
    requested_hours: float
    expected_hours: float
    charged_hours: float
    completion: float
    standard_error: float
    verdict: str
    reason: str
    requests: tuple[RequestAnswer, ...]


def verdict_of(p: float) -> str:
    return "fits" if p >= FITS_AT else ("at risk" if p >= AT_RISK_AT else "does not fit")


def standard_error(p: float, n: int) -> float:
    return math.sqrt(p * (1.0 - p) / n) if n else float("nan")


def _sky_reason(scn: Scenario, j: int, need: int, clear: float,
                av: Availability) -> tuple[str, str]:  # fmt: skip
    """Why the sky alone falls short (rule 1)."""
    r = scn.requests[j]
    key = (r.target, r.configuration)
    if r.configuration not in {scn.semester.configuration_on(d) for d in scn.semester.nights()}:
        return f"configuration {r.configuration} is not on the array this semester", ""
    if av.hours.get(key, 0.0) == 0.0 and av.up_elsewhere.get(key, 0.0) > 0.0:
        return f"configuration {r.configuration} is not on the array while the target is up", ""
    lost = av.lost.get(key, {})
    worst = most_limiting(lost, FAMILIES)
    why = f"; {worst} limits it most" if worst else ""
    return ("sky: too few visits possible even with no weather",
            f"{clear:.0f} of {need}{why}")


def _reason(scn: Scenario, j: int, need: int, mean: np.ndarray,
            av: Availability) -> tuple[str, str]:  # fmt: skip
    """(reason, figures) of a shortfall, by the rules of the module docstring."""
    clear, open_, bright = mean[CLEAR], mean[OPEN], mean[BRIGHT]
    if clear < need:
        return _sky_reason(scn, j, need, clear, av)
    if open_ < need:
        return "weather: too few visits possible outside the losses", f"{open_:.1f} of {need}"
    if bright < need:
        return ("conditions: too few visits possible with the target bright enough",
                f"{bright:.1f} of {need}")
    return "lost to higher-ranked requests", f"{mean[DONE]:.1f} h done on average"


def _weeks(scn: Scenario, j: int, av: Availability) -> tuple[str, ...]:
    r = scn.requests[j]
    weeks: dict[str, float] = {}
    for day, h in av.per_night.get((r.target, r.configuration), {}).items():
        year, week, _ = day.isocalendar()
        weeks[f"{year}-W{week:02d}"] = weeks.get(f"{year}-W{week:02d}", 0.0) + h
    return tuple(w for w, h in sorted(weeks.items(), key=lambda kv: -kv[1])[:2] if h > 0)


def request_answers(scn: Scenario, out: Outcome, av: Availability) -> list[RequestAnswer]:
    """Every request's answer (in the proposals' order)."""
    n = len(out.ks)
    need = scn.need_visits()
    answers = []
    for j, r in enumerate(scn.requests):
        hours = out.hours[:, :, j]
        done = hours[:, DONE] >= r.hours - 1e-9
        p = float(done.mean()) if n else 0.0
        mean = hours.mean(axis=0)
        verdict = verdict_of(p)
        reason, detail = ("-", "") if verdict == "fits" else _reason(scn, j, int(need[j]),
                                                                     mean, av)
        answers.append(RequestAnswer(
            r.program, scn.targets.names[r.target], r.configuration, r.hours,
            av.hours.get((r.target, r.configuration), 0.0), float(mean[DONE]),
            float(mean[CHARGED]), int(need[j]),
            (float(mean[CLEAR]), float(mean[OPEN]), float(mean[BRIGHT])), p,
            standard_error(p, n), verdict, reason, detail, _weeks(scn, j, av),
        ))  # fmt: skip
    return answers


def program_answers(scn: Scenario, out: Outcome,
                    answers: list[RequestAnswer]) -> list[ProgramAnswer]:  # fmt: skip
    """Per programme, in order of first appearance; its requests not fitting first."""
    rows: dict[str, list[int]] = {}
    for j, r in enumerate(scn.requests):
        rows.setdefault(r.program, []).append(j)
    asked = np.array([r.hours for r in scn.requests])
    result = []
    for name, js in rows.items():
        done = np.all(out.hours[:, DONE][:, js] >= asked[js] - 1e-9, axis=1)
        p = float(done.mean()) if len(out.ks) else 0.0
        mine = sorted((answers[j] for j in js), key=lambda a: (a.completion, a.target))
        worst = mine[0]
        verdict = verdict_of(p)
        reason = "-" if verdict == "fits" else (
            f"{worst.target}: {worst.reason}" if worst.verdict != "fits"
            else "each request is likely alone, all together less so")  # fmt: skip
        result.append(ProgramAnswer(
            name, float(asked[js].sum()), sum(a.expected_hours for a in mine),
            sum(a.charged_hours for a in mine), p, standard_error(p, len(out.ks)), verdict,
            reason, tuple(mine)))  # fmt: skip
    return result
