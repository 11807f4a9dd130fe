"""The ``opdplan-advice/1`` document of ``opdplan advise --json``."""

from __future__ import annotations

from typing import Any

from scheduler.advise.advisor import Advice, PlannedOption
from scheduler.model.times import iso_utc


def advice_document(advice: Advice, plans: list[dict[str, Any]],
                    maps: dict[int, str]) -> dict[str, Any]:  # fmt: skip
    """The advice; ``plans`` are the verified plan documents of ``advice.planned`` (in
    order) and ``maps`` the map file written for each rank (1-based), if any."""
    night = advice.planned[0].problem.night
    r = advice.ranking
    return {
        "schema": "opdplan-advice/1",
        "night": {"date": night.date.isoformat(), "start_utc": iso_utc(night.start_s),
                  "end_utc": iso_utc(night.end_s)},
        "solver": advice.solver,
        "step_min": round(r.step_s / 60.0, 4),
        "rank_s": round(advice.rank_s, 3),
        "plan_s": round(advice.plan_s, 3),
        "spaces": [{"configuration": s.configuration, "combinations": s.combinations,
                    "distinct": s.distinct, "exhaustive": s.exhaustive,
                    "seconds": round(s.seconds, 3)} for s in r.reports],
        "choices": [_choice(k, p, d, maps.get(k))
                    for k, (p, d) in enumerate(zip(advice.planned, plans, strict=True), 1)],
    }  # fmt: skip


def _choice(rank: int, p: PlannedOption, plan: dict[str, Any],
            map_file: str | None) -> dict[str, Any]:  # fmt: skip
    o, c = p.option, p.option.choice
    return {
        "rank": rank,
        "configuration": c.configuration,
        "name": p.configuration.name,
        "tonight": o.is_current,
        "feeds": dict(c.feeds),
        "fixed_offsets_m": dict(c.offsets_m),
        "changes": list(o.changes),
        "weighted_hours": round(o.weighted_hours, 4),
        "open_targets": list(o.open_targets),
        "opens": list(o.opens),
        "closes": list(o.closes),
        "least_headroom_m": None if o.least_headroom_m is None else round(o.least_headroom_m, 3),
        "alike": o.alike,
        "hours": dict(o.hours),
        "planned": {"value": plan["summary"]["weighted_value"],
                    "science_hours": plan["summary"]["science_hours"],
                    "visits": len(plan["visits"]),
                    "verified": plan["summary"]["verified"]},
        "configuration_toml": c.toml(p.configuration.name),
        "map": map_file,
    }  # fmt: skip
