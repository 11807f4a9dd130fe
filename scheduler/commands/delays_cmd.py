"""``opdplan delays``: carriage positions through the night, for pre-positioning."""

from __future__ import annotations

import numpy as np
import pandas as pd

from scheduler.catalog import Targets, parse_targets
from scheduler.commands.common import Inputs
from scheduler.constraints import DELAY_BASE, evaluate
from scheduler.delay import centred_offset, line_paths
from scheduler.timefmt import hours_label, iso_utc
from scheduler.views.delays_view import DelaySample, DelaysView


def coordinate_target(ra: str, dec: str) -> Targets:
    """A one-row catalog for a position given on the command line."""
    frame = pd.DataFrame({"name": [f"ra {ra} dec {dec}"], "ra": [ra], "dec": [dec],
                          "duration_min": ["1"]})  # fmt: skip
    return parse_targets(frame, "--ra/--dec")


def samples(inputs: Inputs, index: int, step_s: float) -> list[DelaySample]:
    ctx = inputs.context()
    night = inputs.night
    t = np.arange(night.start_s, night.end_s + 1e-6, step_s)
    ev = evaluate(ctx, np.full(t.shape, index), t)
    k = centred_offset(ev.span)
    paths = line_paths(ctx.beams, ev.pds_m, k)
    feasible = ev.span.feasible(0.0)
    out = []
    for j, tj in enumerate(t):
        code = int(ev.code[j])
        delay_ok = bool(feasible[j]) and not code >= DELAY_BASE
        out.append(DelaySample(
            utc=iso_utc(tj),
            lst=hours_label(night.lst_rad(tj)),
            altitude_deg=round(float(np.degrees(ev.alt_rad[j])), 4),
            azimuth_deg=round(float(np.degrees(ev.az_rad[j])), 4),
            opd_m={ln: round(float(paths[i, j]), 6) for i, ln in enumerate(ctx.beams.line_names)}
            if delay_ok else None,
            feasible=delay_ok,
            status=ctx.reason(code),
            short=ctx.short_reason(code),
        ))  # fmt: skip
    return out


def run(inputs: Inputs, index: int, step_s: float, as_json: bool):
    rows = samples(inputs, index, step_s)
    if as_json:
        return {
            "target": inputs.targets.names[index],
            "configuration": inputs.beams.configuration,
            "samples": [
                {"utc": s.utc, "altitude_deg": s.altitude_deg, "azimuth_deg": s.azimuth_deg,
                 "opd_m": s.opd_m, "feasible": s.feasible, "status": s.status}
                for s in rows
            ],
        }  # fmt: skip
    title = (f"Carriage positions for {inputs.targets.names[index]} - configuration "
             f"{inputs.beams.configuration} - night of {inputs.night.date}")  # fmt: skip
    return DelaysView(title, inputs.beams.line_names, rows)
