"""Read and check a campaign file (TOML) and the night logs that count towards it.

```toml
[campaign]
name = "ring imaging"          # optional, shown in views and plans

[[targets]]
target = "Heron-05"            # a catalog row
visits = { medium = 2, long = 2 }   # visits wanted per configuration
ha_spread_h = 1.5              # optional: least hour-angle gap between any two visits
```

Logs: every ``*.jsonl`` night log of a folder; each ``done`` record written by
``opdplan log done`` carries its target, configuration, night and visit length, so the
logs alone tell what was done.  A record without them cannot be counted and is named in
a warning; the same visit of the same night logged twice counts once.
"""

from __future__ import annotations

import datetime as dt
import math
from pathlib import Path
from typing import Any

from scheduler.inputs.night_log import read_log
from scheduler.inputs.toml_file import read_toml
from scheduler.model.array import ArrayModel
from scheduler.model.campaign import Campaign, CampaignState, CampaignTarget, DoneVisit
from scheduler.model.errors import InputError, Problem, ProblemList
from scheduler.model.log import Event
from scheduler.model.targets import HOUR_ANGLE_RAD_PER_H, Targets

_TOP = {"campaign", "targets"}
FAR_FROM_PLAN_S = 12 * 3600.0  # a done visit logged this far from its plan is mistimed


def load_campaign(path: str | Path, targets: Targets | None,
                  array: ArrayModel | None) -> Campaign:  # fmt: skip
    """The campaign; every problem reported together (names are checked against the
    catalog and the array when they could be read)."""
    src = str(path)
    data = read_toml(path)
    p = ProblemList(src)
    for key in sorted(set(data) - _TOP):
        p.add(key, f"unknown key (allowed: {sorted(_TOP)})")
    head = data.get("campaign", {})
    if not isinstance(head, dict) or set(head) - {"name"}:
        p.add("campaign", "must be a table with an optional 'name'")
        head = {}
    raw = data.get("targets")
    if not isinstance(raw, list) or not raw:
        p.add("targets", "needs at least one [[targets]] table")
        raw = []
    out = [_target(t, f"targets[{i}]", targets, array, p) for i, t in enumerate(raw)]
    names = [t.target for t in out if t is not None]
    for i, name in enumerate(names):
        if name in names[:i]:
            p.add("targets", f"{name!r} appears twice")
    p.raise_if_any()
    return Campaign(str(head.get("name", Path(src).stem)), tuple(t for t in out if t), src)


def _target(t: Any, where: str, targets: Targets | None, array: ArrayModel | None,
            p: ProblemList) -> CampaignTarget | None:  # fmt: skip
    if not isinstance(t, dict):
        p.add(where, f"must be a table, got {t!r}")
        return None
    for key in sorted(set(t) - {"target", "visits", "ha_spread_h"}):
        p.add(f"{where}.{key}", "unknown key (allowed: ['ha_spread_h', 'target', 'visits'])")
    name, visits = t.get("target"), t.get("visits")
    if not isinstance(name, str) or (targets is not None and name not in targets.names):
        p.add(f"{where}.target", f"{name!r} is not a target of the catalog")
    configs = {c.name for c in array.configurations} if array is not None else None
    if not isinstance(visits, dict) or not visits:
        p.add(f"{where}.visits", "must map configurations to numbers of visits")
        visits = {}
    for cfg, n in visits.items():
        if configs is not None and cfg not in configs:
            p.add(f"{where}.visits.{cfg}", f"{cfg!r} is not a configuration of the array")
        if isinstance(n, bool) or not isinstance(n, int) or not 1 <= n <= 1000:
            p.add(f"{where}.visits.{cfg}", f"must be a whole number 1-1000, got {n!r}")
    spread = t.get("ha_spread_h")
    if spread is not None and (isinstance(spread, bool) or not isinstance(spread, int | float)
                               or not 0 <= spread <= 12):  # fmt: skip
        p.add(f"{where}.ha_spread_h", f"must be a number of hours 0-12, got {spread!r}")
        spread = None
    if not isinstance(name, str):
        return None
    return CampaignTarget(name, tuple((str(c), int(n)) for c, n in visits.items()
                                      if isinstance(n, int)),
                          None if spread is None else float(spread) * HOUR_ANGLE_RAD_PER_H)


def load_done(folder: str | Path) -> tuple[tuple[DoneVisit, ...], list[str]]:
    """Science visits logged done in the night logs of ``folder`` (``*.jsonl``), and
    warnings for records that cannot be counted.  A folder that does not exist yet holds
    no visits (a campaign's first night)."""
    root = Path(folder)
    if not root.exists():
        return (), [f"{folder}: no night logs yet, no visits counted"]
    if not root.is_dir():
        raise InputError(Problem(str(folder), "", "is not a folder of night logs"))
    seen: dict[tuple[str, str], DoneVisit] = {}
    warnings: list[str] = []
    problems: list[Problem] = []
    for path in sorted(root.glob("*.jsonl")):
        try:
            records, cut = read_log(path)
        except InputError as exc:
            problems += exc.problems
            continue
        warnings += cut
        for r in records:
            if r.event is not Event.DONE:
                continue
            visit = _done(r, str(path))
            if visit is not None and r.planned_end_s is not None and abs(
                    visit.end_s - r.planned_end_s) > FAR_FROM_PLAN_S:  # fmt: skip
                warnings.append(f"{path}: line {r.line}: visit {r.visit!r} logged done more "
                                "than 12 h from its planned end (logged after the night "
                                "without --at?); its planned time is used")  # fmt: skip
                visit = _done(r, str(path), at_s=r.planned_end_s)
            if visit is None:
                warnings.append(f"{path}: line {r.line}: visit {r.visit!r} does not say its "
                                "target and configuration (logged by an older opdplan); "
                                "not counted")  # fmt: skip
            else:
                seen.setdefault((visit.night.isoformat(), visit.visit), visit)
    if problems:
        raise InputError(problems)
    return tuple(sorted(seen.values(), key=lambda v: v.start_s)), warnings


def _done(r: Any, source: str, at_s: float | None = None) -> DoneVisit | None:
    at_s = r.at_s if at_s is None else at_s
    if None in (r.target, r.configuration, r.night, r.duration_s, at_s, r.visit):
        return None
    try:
        night = dt.date.fromisoformat(r.night)
    except ValueError:
        return None
    if not math.isfinite(at_s):
        return None
    return DoneVisit(night, r.visit, r.target, r.configuration, at_s - r.duration_s, at_s,
                     f"{source}: line {r.line}")  # fmt: skip


def campaign_of_plan(doc: dict[str, Any]) -> CampaignState | None:
    """The campaign a plan document was made for (its ``campaign`` block), so that a
    replan keeps it; None when the plan has none."""
    from scheduler.model.times import parse_utc

    block = doc.get("campaign")
    if not block:
        return None
    targets, done = [], []
    for t in block["targets"]:
        spread = t.get("ha_spread_h")
        targets.append(CampaignTarget(t["target"], tuple(t["visits"].items()),
                                      None if spread is None else spread * HOUR_ANGLE_RAD_PER_H))
        done += [DoneVisit(dt.date.fromisoformat(d["night"]), d["visit"], t["target"],
                           d["configuration"], parse_utc(d["start_utc"]), parse_utc(d["end_utc"]),
                           "plan")  # fmt: skip
                 for d in t["done"]]
    return CampaignState(Campaign(block["name"], tuple(targets), block.get("source", "")),
                         tuple(done))
