"""``opdplan delays``: carriage positions through the night, for pre-positioning.

Samples fall on whole multiples of the step in UTC (03:00, 03:10, ...), and the
positions are those at exactly the printed instants."""

from __future__ import annotations

import argparse
from typing import Any

import numpy as np
import pandas as pd
from rich.console import Console

from scheduler.cli.commands.common import Inputs, Result, finish_inputs, gather_inputs
from scheduler.geometry.constraints import evaluate
from scheduler.geometry.delay import centred_offset, line_paths
from scheduler.inputs.catalog import load_targets, parse_targets
from scheduler.model.errors import Gather
from scheduler.model.reasons import Limit, limit_of, short_words, words
from scheduler.model.targets import Targets
from scheduler.model.times import hours_label, iso_utc_exact
from scheduler.views.delays_view import DelaySample, DelaysView

MAX_STEP_MIN = 240.0
MAX_SAMPLES = 5000  # beyond this many samples the output needs --force
SAMPLE_BYTES = 140  # rough JSON size of one sample, plus SAMPLE_LINE_BYTES per line
SAMPLE_LINE_BYTES = 25


def coordinate_target(ra: str, dec: str) -> Targets:
    """A one-row catalog for a position given on the command line."""
    frame = pd.DataFrame({"name": [f"ra {ra} dec {dec}"], "ra": [ra], "dec": [dec],
                          "duration_min": ["1"]})  # fmt: skip
    return parse_targets(frame, "--ra/--dec")


def sample_times(start_s: float, end_s: float, step_s: float) -> np.ndarray:
    """Whole multiples of ``step_s`` (POSIX UTC seconds) inside ``[start_s, end_s]``."""
    first = np.ceil(start_s / step_s - 1e-9)
    last = np.floor(end_s / step_s + 1e-9)
    return np.arange(first, last + 1) * step_s


def samples(inputs: Inputs, index: int, step_s: float) -> list[DelaySample]:
    problem = inputs.problem()
    night, beams = inputs.night, problem.beams
    t = sample_times(night.start_s, night.end_s, step_s)
    ev = evaluate(problem, np.full(t.shape, index), t)
    paths = line_paths(beams, ev.pds_m, centred_offset(ev.span))
    feasible = ev.span.feasible(0.0)
    out = []
    for j, tj in enumerate(t):
        code = int(ev.code[j])
        delay_ok = bool(feasible[j]) and int(limit_of(code)) != Limit.DELAY
        out.append(DelaySample(
            utc=iso_utc_exact(tj), lst=hours_label(float(night.lst_rad(tj))),
            altitude_deg=round(float(np.degrees(ev.alt_rad[j])), 4),
            azimuth_deg=round(float(np.degrees(ev.az_rad[j])), 4),
            opd_m={ln: round(float(paths[i, j]), 6) for i, ln in enumerate(beams.line_names)}
            if delay_ok else None,
            feasible=delay_ok, status=words(code, beams, problem.limits),
            short=short_words(code, beams),
        ))  # fmt: skip
    return out


def _target(args: argparse.Namespace, g: Gather) -> tuple[Targets | None, int]:
    if args.target is not None and (args.ra is not None or args.dec is not None):
        g.add("--target", "", "give either --target or --ra/--dec, not both")
        return None, 0
    if args.target is not None:
        if args.targets is None:
            g.add("--target", "", "needs --targets FILE to look the name up")
            return None, 0
        targets = g.take(load_targets, args.targets)
        if targets is not None and args.target not in targets.names:
            g.add("--target", "", f"{args.target!r} is not in {args.targets}")
            return None, 0
        return targets, targets.index(args.target) if targets is not None else 0
    if args.ra is None or args.dec is None:
        g.add("delays", "", "give --ra and --dec, or --target with --targets")
        return None, 0
    return g.take(coordinate_target, args.ra, args.dec), 0


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    g = Gather()
    targets, index = _target(args, g)
    if not 0.0 < args.step_min <= MAX_STEP_MIN:
        g.add("--step-min", "", f"{args.step_min} is not in (0, {MAX_STEP_MIN:.0f}] minutes")
    array, _, date = gather_inputs(args.array, args.config, targets, args.night, g)
    g.raise_if_any()
    assert targets is not None
    inputs = finish_inputs(array, args.config, targets, date)
    count = int(inputs.night.duration_s // (args.step_min * 60.0)) + 1
    if count > MAX_SAMPLES and not args.force:
        size_mb = count * (SAMPLE_BYTES + SAMPLE_LINE_BYTES * len(inputs.beams)) / 1e6
        g.add("--step-min", "", f"{args.step_min:g} gives {count:,} samples (about "
              f"{size_mb:.0f} MB of JSON, more than {MAX_SAMPLES:,} samples); pass --force "
              "to accept")  # fmt: skip
        g.raise_if_any()
    rows = samples(inputs, index, args.step_min * 60.0)
    warnings = list(inputs.warnings)
    if args.json:
        doc: dict[str, Any] = {
            "target": targets.names[index], "configuration": inputs.beams.configuration,
            "samples": [{"utc": s.utc, "altitude_deg": s.altitude_deg,
                         "azimuth_deg": s.azimuth_deg, "opd_m": s.opd_m,
                         "feasible": s.feasible, "status": s.status} for s in rows],
        }  # fmt: skip
        return Result(json=doc, warnings=warnings)
    title = (f"Carriage positions for {targets.names[index]} - configuration "
             f"{inputs.beams.configuration} - night of {inputs.night.date}")  # fmt: skip
    return Result(view=[DelaysView(title, inputs.beams.line_names, rows)], warnings=warnings)
