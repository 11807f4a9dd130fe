"""Rules of a plan made for a campaign (its ``campaign`` block; README, *Campaigns*):

- ``visits_per_target``: tonight, a campaign target has at most the visits its campaign
  still wants with tonight's configuration (those wanted less those done on earlier
  nights, as the block lists them);
- ``hour_angle_spread``: the mid-visit hour angles of a target's visits, tonight's and
  those of earlier nights with the same configuration, differ by at least its spread
  (the campaign's ``ha_spread_h``, else the catalog's).  Hour angles come from astropy's
  full transform (:func:`scheduler.astro.reference.star_hour_angle`), not from the plan.

The block's list of earlier visits is taken as written (like a replan's done visits).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from scheduler.astro.reference import star_hour_angle
from scheduler.model.array import Site
from scheduler.model.targets import MAS_TO_RAD, Targets
from scheduler.model.times import parse_utc
from scheduler.verify.document import Entry
from scheduler.verify.report import Violation
from scheduler.verify.tolerances import HOUR_ANGLE_TOL_RAD

HOUR_RAD = math.pi / 12.0


def campaign_allowed(doc: dict[str, Any], configuration: str) -> dict[str, int]:
    """Visits each campaign target may have tonight (empty without a campaign)."""
    block = doc.get("campaign") or {}
    out = {}
    for t in block.get("targets", []):
        done = sum(1 for d in t["done"] if d["configuration"] == configuration)
        out[t["target"]] = max(0, int(t["visits"].get(configuration, 0)) - done)
    return out


def _spreads(doc: dict[str, Any], targets: Targets) -> dict[str, float]:
    out = {n: float(targets.ha_spread_rad[i]) for i, n in enumerate(targets.names)
           if targets.ha_spread_rad[i] > 0}  # fmt: skip
    for t in (doc.get("campaign") or {}).get("targets", []):
        if t.get("ha_spread_h") is not None:
            out[t["target"]] = float(t["ha_spread_h"]) * HOUR_RAD
    return out


def _hour_angles(site: Site, targets: Targets, name: str, mids_s: list[float]) -> np.ndarray:
    i = targets.index(name)
    n = len(mids_s)
    return star_hour_angle(
        math.degrees(site.latitude_rad), math.degrees(site.longitude_rad), site.height_m,
        np.full(n, math.degrees(targets.ra_rad[i])), np.full(n, math.degrees(targets.dec_rad[i])),
        np.full(n, targets.pm_ra_rad_yr[i] / MAS_TO_RAD),
        np.full(n, targets.pm_dec_rad_yr[i] / MAS_TO_RAD), np.asarray(mids_s, float))


def spread_violations(doc: dict[str, Any], visits: tuple[Entry, ...], site: Site,
                      targets: Targets, configuration: str) -> list[Violation]:  # fmt: skip
    """Planned visits whose mid-visit hour angle is too close to another visit's."""
    earlier: dict[str, list[tuple[str, float]]] = {}
    for t in (doc.get("campaign") or {}).get("targets", []):
        earlier[t["target"]] = [
            (f"{d['visit']} of {d['night']}",
             0.5 * (parse_utc(d["start_utc"]) + parse_utc(d["end_utc"])))
            for d in t["done"] if d["configuration"] == configuration]  # fmt: skip
    found = []
    for name, spread in _spreads(doc, targets).items():
        mine = [(v.id, 0.5 * (v.start_s + v.end_s)) for v in visits if v.target == name]
        if not mine:
            continue
        before = earlier.get(name, [])
        ha = _hour_angles(site, targets, name, [m for _, m in mine + before])
        for k, (vid, _) in enumerate(mine):
            for j in range(len(mine) + len(before)):
                if j == k or (j < len(mine) and j < k):
                    continue
                gap = abs(float(np.angle(np.exp(1j * (ha[k] - ha[j])))))
                if gap < spread - HOUR_ANGLE_TOL_RAD:
                    other = (mine + before)[j][0]
                    found.append(Violation("hour_angle_spread", vid, (
                        f"hour angle {gap / HOUR_RAD:.2f} h from {other}; {name} needs "
                        f"{spread / HOUR_RAD:.2f} h")))  # fmt: skip
    return found
