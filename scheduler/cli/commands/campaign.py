"""``opdplan campaign``: what an imaging campaign has done and what is left, with the
(u, v) coverage of the visits done, from its file and the night logs of a folder."""

from __future__ import annotations

import argparse
import math
from typing import Any

from rich.console import Console

from scheduler.cli.commands.common import Result
from scheduler.inputs.array_file import load_array
from scheduler.inputs.campaign_file import load_campaign, load_done
from scheduler.inputs.catalog import load_targets
from scheduler.model.campaign import CampaignState
from scheduler.model.errors import Gather

HOUR_PER_RAD = 12.0 / math.pi


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    from scheduler.queue.campaign_progress import progress

    g = Gather()
    array = g.take(load_array, args.array)
    targets = g.take(load_targets, args.targets,
                     [m.name for m in array.modes] if array is not None else None)
    campaign = g.take(load_campaign, args.campaign, targets, array)
    got = g.take(load_done, args.log)
    g.raise_if_any()
    assert array is not None and targets is not None and campaign is not None and got
    done, warnings = got
    state = CampaignState(campaign, done)
    rows = progress(array, targets, state)
    doc = {"campaign": campaign.name, "source": campaign.source, "log": args.log,
           "targets": [_row(r) for r in rows]}  # fmt: skip
    result = Result(warnings=warnings, caution=False)
    if args.json:
        result.json = doc
        return result
    from scheduler.views.campaign_view import CampaignView

    result.view = [CampaignView(doc)]
    return result


def _row(r: Any) -> dict[str, Any]:
    c = r.coverage
    return {"target": r.target, "configuration": r.configuration, "wanted": r.wanted,
            "done": r.done, "left": r.left, "nights": [d.isoformat() for d in r.nights],
            "hour_angles_h": [round(h * HOUR_PER_RAD, 3) for h in r.hour_angles_rad],
            "coverage": {"points": c.points, "fill": round(c.fill, 4),
                         "fill_radius_m": round(c.fill_radius_m, 3),
                         "position_angle_gap_deg": round(math.degrees(c.position_angle_gap_rad), 3),
                         "radial_gap_m": round(c.radial_gap_m, 3),
                         "longest_m": round(c.longest_m, 3)}}  # fmt: skip
