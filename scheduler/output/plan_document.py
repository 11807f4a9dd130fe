"""The plan document, schema ``opdplan-plan/1`` (published as
``scheduler/inputs/opdplan-plan-1.schema.json``).

It carries everything the verifier needs besides the array file and the catalog: the
night, the configuration, the stations and delay lines in use, each visit's times (to
the millisecond, so that a stated carriage position and the printed instant agree),
transition and carriage paths, and the rules the queue followed.  A replan adds what
happened and what changed.
"""

from __future__ import annotations

import json
import time
from pathlib import Path
from typing import Any

import numpy as np

from scheduler.geometry.constraints import evaluate
from scheduler.geometry.delay import line_paths
from scheduler.inputs.plan_file import SCHEMA
from scheduler.inputs.provenance import input_ref
from scheduler.model.array import ArrayModel
from scheduler.model.campaign import CampaignState
from scheduler.model.conditions import Conditions
from scheduler.model.plan import Plan, PlanSettings, Start, Visit
from scheduler.model.problem import NightProblem
from scheduler.model.times import iso_utc, iso_utc_ms
from scheduler.replan.diff import plan_diff
from scheduler.replan.situation import Situation

ADVISORY = "Advisory only: every motion follows the site's interlocks and procedures."
PROFILE_POINTS = 9  # samples of a done visit for its altitude range


def rules_of(settings: PlanSettings) -> dict[str, float | int | bool]:
    """The queue's rules as written in a plan (and compared by the verifier)."""
    return {
        "calibrator_gap_min": settings.calibrator_gap_s / 60.0,
        "calibrator_max_sep_deg": float(np.degrees(settings.calibrator_max_sep_rad)),
        "calibrator_max_dmag": settings.calibrator_max_dmag,
        "calibrator_min_visibility": settings.calibrator_min_visibility,
        "calibrator_copies": settings.calibrator_copies,
        "carriage_weight": settings.carriage_weight,
        "value_per_hour": settings.value_per_hour,
        "strict_priority": settings.strict_priority,
    }


def conditions_entry(c: Conditions) -> dict[str, float | None]:
    """The conditions a plan assumed (None: each mode's reference; no wind)."""
    return {
        "seeing_arcsec": None if c.seeing_rad is None else round(float(np.degrees(c.seeing_rad))
                                                                * 3600.0, 4),
        "coherence_ms": None if c.coherence_s is None else round(c.coherence_s * 1e3, 4),
        "wind_speed_m_s": c.wind_speed_m_s,
        "wind_from_deg": None if c.wind_from_rad is None else round(
            float(np.degrees(c.wind_from_rad)) % 360.0, 4),
    }  # fmt: skip


def _paths(lines: tuple[str, ...], values: tuple[float, ...]) -> dict[str, float]:
    return {ln: round(x, 6) for ln, x in zip(lines, values, strict=True)}


def visit_entry(problem: NightProblem, v: Visit) -> dict[str, Any]:
    t, lines = problem.targets, problem.beams.line_names
    return {
        "id": v.id, "target": t.names[v.target], "kind": str(v.kind), "number": v.number,
        "program": t.program[v.target], "priority": float(t.priority[v.target]),
        "mode": problem.mode_of(v.target).name,
        "wavelength_um": round(problem.mode_of(v.target).wavelength_m * 1e6, 6),
        "bandwidth_um": round(problem.mode_of(v.target).bandwidth_m * 1e6, 6),
        "ra_deg": float(np.degrees(t.ra_rad[v.target])),
        "dec_deg": float(np.degrees(t.dec_rad[v.target])),
        "start_utc": iso_utc_ms(v.start_s), "end_utc": iso_utc_ms(v.end_s),
        "start_s": round(v.start_s, 3), "end_s": round(v.end_s, 3),
        "transition_s": round(v.transition_s, 3), "slew_s": round(v.slew_s, 3),
        "carriage_s": round(v.carriage_s, 3), "acquisition_s": v.acquisition_s,
        "altitude_deg": [round(float(np.degrees(a)), 3) for a in v.alt_range_rad],
        "opd_start_m": _paths(lines, v.opd_start_m), "opd_end_m": _paths(lines, v.opd_end_m),
        "calibrates": list(v.calibrates), "setup_s": round(v.setup_s, 3),
        "weak_baselines": [{"baseline": b, "squared_visibility_min": v2}
                           for b, v2 in v.weak_baselines],
    }  # fmt: skip


def _array_part(problem: NightProblem, array: ArrayModel) -> dict[str, Any]:
    b = problem.beams
    return {
        "site": {"name": array.site.name,
                 "latitude_deg": float(np.degrees(array.site.latitude_rad)),
                 "longitude_deg": float(np.degrees(array.site.longitude_rad)),
                 "height_m": array.site.height_m},
        "configuration": b.configuration,
        "stations": [{"name": st.name, "east_m": st.east_m, "north_m": st.north_m,
                      "up_m": st.up_m, "internal_path_m": st.internal_path_m}
                     for st in (array.station(n) for n in b.station_names)],
        "delay_lines": [{"name": ln, "station": b.station_names[i],
                         "opd_min_m": float(b.opd_min_m[i]), "opd_max_m": float(b.opd_max_m[i]),
                         "max_rate_m_s": float(b.rate_m_s[i]),
                         "fixed_offset_m": float(b.fixed_offset_m[i])}
                        for i, ln in enumerate(b.line_names)],
    }  # fmt: skip


def campaign_entry(state: CampaignState) -> dict[str, Any]:
    """The ``campaign`` block: each target's visits wanted per configuration, its
    hour-angle spread and the visits done on earlier nights."""
    c = state.campaign
    return {"name": c.name, "source": c.source, "targets": [
        {"target": t.target, "visits": dict(t.visits),
         "ha_spread_h": None if t.ha_spread_rad is None else round(
             float(t.ha_spread_rad) * 12.0 / np.pi, 6),
         "done": [{"night": d.night.isoformat(), "visit": d.visit,
                   "configuration": d.configuration, "start_utc": iso_utc_ms(d.start_s),
                   "end_utc": iso_utc_ms(d.end_s)} for d in state.done_of(t.target)]}
        for t in c.targets]}  # fmt: skip


def plan_document(problem: NightProblem, array: ArrayModel, plan: Plan,
                  settings: PlanSettings,
                  campaign: CampaignState | None = None) -> dict[str, Any]:  # fmt: skip
    """The ``opdplan-plan/1`` document of ``plan`` (made for ``campaign`` if given)."""
    night = problem.night
    extra = {"campaign": campaign_entry(campaign)} if campaign is not None else {}
    return {
        "schema": SCHEMA, "created_utc": iso_utc(time.time()), "advisory": ADVISORY,
        "night": {"date": night.date.isoformat(), "start_utc": iso_utc_ms(night.start_s),
                  "end_utc": iso_utc_ms(night.end_s)},
        **_array_part(problem, array),
        "visits": [visit_entry(problem, v) for v in plan.visits],
        "unscheduled": [{"target": u.target, "reason": u.reason, "detail": u.detail}
                        for u in plan.unscheduled],
        "rules": rules_of(settings),
        "conditions": conditions_entry(problem.conditions),
        "backups": [{"hour_utc": iso_utc(h), "targets": list(names)} for h, names in plan.backups],
        "inputs": {"array": input_ref(array.source), "targets": input_ref(problem.targets.source)},
        "summary": plan.summary.as_dict(),
        **extra,
    }  # fmt: skip


def _carriages_at(problem: NightProblem, entry: dict[str, Any], start_s: float,
                  end_s: float) -> dict[str, Any]:  # fmt: skip
    """Altitudes and carriage paths of a done visit at the times it was logged: the
    common constant K it was planned with, moved just enough to stay in range."""
    beams, lines = problem.beams, problem.beams.line_names
    i = problem.targets.index(entry["target"])
    t = np.linspace(start_s, end_s, PROFILE_POINTS)
    ev = evaluate(problem, np.full(t.shape, i), t)
    planned = evaluate(problem, np.array([i]), np.array([float(entry["start_s"])]))
    known = [k for k, ln in enumerate(lines) if ln in entry["opd_start_m"]]
    x_planned = np.array([entry["opd_start_m"][lines[k]] for k in known])
    implied = x_planned - planned.pds_m[known, 0] + beams.path_m[known]
    k_m = float(np.mean(implied)) if len(known) else 0.0
    out: dict[str, Any] = {"altitude_deg": [round(float(np.degrees(a)), 3)
                                            for a in (ev.alt_rad.min(), ev.alt_rad.max())]}
    for key, col in (("opd_start_m", 0), ("opd_end_m", -1)):
        k = float(np.clip(k_m, ev.span.low_m[col], max(ev.span.low_m[col], ev.span.high_m[col])))
        x = line_paths(beams, ev.pds_m[:, col], k)
        out[key] = {ln: round(float(v), 6) for ln, v in zip(lines, x, strict=True)}
    return out


def done_entries(problem: NightProblem, old: dict[str, Any],
                 sit: Situation) -> list[dict[str, Any]]:  # fmt: skip
    """The done visits with their logged times, altitudes and carriage paths recomputed
    at those times (``problem`` holds every line of the configuration)."""
    known = {v["id"]: v for v in old["visits"] + old.get("done", [])}
    done = []
    for vid, at in sorted(sit.done.items(), key=lambda kv: kv[1] or 0.0):
        v = dict(known[vid])
        if at is not None and abs(at - float(v["end_s"])) > 0.0005:
            length = v["end_s"] - v["start_s"]
            start = at - length
            v.update(_carriages_at(problem, v, start, at))
            v.update(end_s=round(at, 3), start_s=round(start, 3), end_utc=iso_utc_ms(at),
                     start_utc=iso_utc_ms(start))  # fmt: skip
        done.append(v)
    return done


def replan_document(problem: NightProblem, array: ArrayModel, plan: Plan, settings: PlanSettings,
                    origin: Start, old: dict[str, Any], sit: Situation, plan_path: str,
                    done_problem: NightProblem | None = None) -> dict[str, Any]:  # fmt: skip
    """The replan's document: the plan schema plus ``replanned_from``, ``done`` (with
    their logged times; ``done_problem``, the night with every line of the
    configuration, recomputes them), ``out``, ``closures``, ``start_state`` and
    ``diff``."""
    doc = plan_document(problem, array, plan, settings)
    if old.get("campaign"):  # a campaign's plan stays one when replanned
        doc["campaign"] = old["campaign"]
    done = done_entries(done_problem or problem, old, sit)
    lines = problem.beams.line_names
    opd = None
    if origin.opd_m is not None:
        opd = {ln: (None if np.isnan(x) else x) for ln, x in zip(lines, origin.opd_m, strict=True)}
    doc.update({
        "replanned_from": {"plan": str(Path(plan_path).resolve()),
                           "now_utc": iso_utc_ms(sit.now_s)},
        "done": done, "out": sorted(sit.out),
        "closures": [[iso_utc_ms(a), iso_utc_ms(b)] for a, b in sit.closures],
        "start_state": {"utc": iso_utc_ms(origin.t_s),
                        "pointing": (problem.targets.names[origin.target]
                                     if origin.target is not None else None),
                        "opd_m": opd},
        "diff": plan_diff(old["visits"], doc["visits"], set(sit.done)),
    })  # fmt: skip
    return doc


def document_bytes(doc: dict[str, Any]) -> bytes:
    return (json.dumps(doc, indent=2, allow_nan=False) + "\n").encode("utf-8")
