"""``opdplan uv``: the (u, v, w) tracks and coverage of a target over the night, or of
every science target of a plan over its planned visits."""

from __future__ import annotations

import argparse
from typing import Any

import numpy as np
from rich.console import Console

from scheduler.cli.commands.common import (
    Result,
    check_matplotlib,
    finish_inputs,
    gather_inputs,
)
from scheduler.geometry.uv_night import TargetTracks, target_tracks
from scheduler.geometry.windows import observable_windows
from scheduler.inputs.plan_file import read_plan
from scheduler.inputs.provenance import plan_input
from scheduler.model.errors import Gather
from scheduler.model.problem import NightProblem
from scheduler.model.times import iso_utc
from scheduler.output.files import check_outputs

STEP_RANGE_MIN = (0.5, 120.0)


def _checks(args: argparse.Namespace, g: Gather) -> None:
    lo, hi = STEP_RANGE_MIN
    if not lo <= args.step_min <= hi:
        g.add("--step-min", "", f"{args.step_min} is not in [{lo:g}, {hi:g}]")
    if args.fill_radius_m is not None and not args.fill_radius_m > 0:
        g.add("--fill-radius-m", "", f"{args.fill_radius_m} is not a positive length")
    if (args.target is None) == (args.plan is None):
        g.add("opdplan uv", "", "give either --target NAME or --plan FILE")


def _inputs(args: argparse.Namespace, g: Gather) -> tuple[Any, ...]:
    """(array path, configuration, catalog path, night text, plan document or None)."""
    doc = None
    array, config, targets, night = args.array, args.config, args.targets, args.night
    if args.plan is not None:
        doc = g.take(read_plan, args.plan)
        if doc is not None:
            array = plan_input(doc, args.plan, "array", args.array, g)
            targets = plan_input(doc, args.plan, "targets", args.targets, g)
            config, night = doc["configuration"], doc["night"]["date"]
    for option, value in (("--array", array), ("--config", config), ("--targets", targets),
                          ("--night", night)):  # fmt: skip
        if value is None and args.plan is None:
            g.add(option, "", "is needed with --target")
    return array, config, targets, night, doc


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    g = Gather()
    _checks(args, g)
    array_path, config, targets_path, night_text, doc = _inputs(args, g)
    outs = check_outputs({"--plot": args.plot}, [p for p in (args.array, args.targets,
                                                              args.plan) if p], g)  # fmt: skip
    if args.plot:
        check_matplotlib("--plot", g)
    loaded: tuple[Any, Any, Any] = (None, None, None)
    if array_path and targets_path and night_text and config:
        loaded = gather_inputs(array_path, config, targets_path, night_text, g)
    array, targets, date = loaded
    if args.target is not None and targets is not None and args.target not in targets.names:
        g.add("--target", "", f"{args.target!r} is not in {targets.source}")
    g.raise_if_any()
    inputs = finish_inputs(array, config, targets, date)
    problem = inputs.problem()
    tracks = _tracks(problem, args, doc)
    out = uv_document(problem, tracks)
    result = Result(warnings=list(inputs.warnings), caution=False)
    if outs:
        from scheduler.output.plot import uv_png

        result.outputs = [(outs[0], uv_png(out))]
    if args.json:
        result.json = out
        return result
    from scheduler.views.uv_view import UVView

    result.view = [UVView(out)]
    return result


def _tracks(problem: NightProblem, args: argparse.Namespace,
            doc: dict[str, Any] | None) -> list[TargetTracks]:  # fmt: skip
    step = args.step_min * 60.0
    t = problem.targets
    if doc is None:
        i = t.index(args.target)
        spans = list(observable_windows(problem.subset(np.array([i])))[0].observable)
        return [target_tracks(problem, i, spans, step, args.fill_radius_m)]
    per: dict[str, list[tuple[float, float]]] = {}
    for v in doc["visits"]:
        if v["kind"] == "science":
            per.setdefault(v["target"], []).append((float(v["start_s"]), float(v["end_s"])))
    return [target_tracks(problem, t.index(name), spans, step, args.fill_radius_m)
            for name, spans in per.items() if name in t.names]  # fmt: skip


def uv_document(problem: NightProblem, tracks: list[TargetTracks]) -> dict[str, Any]:
    """The ``opdplan uv --json`` document."""
    night = problem.night
    return {"night": {"date": night.date.isoformat(), "start_utc": iso_utc(night.start_s),
                      "end_utc": iso_utc(night.end_s)},
            "configuration": problem.beams.configuration,
            "targets": [_target(problem, tr) for tr in tracks]}  # fmt: skip


def _target(problem: NightProblem, tr: TargetTracks) -> dict[str, Any]:
    c, lam = tr.coverage, tr.wavelength_m
    pa_gap_deg = round(float(np.degrees(c.position_angle_gap_rad)), 3)
    return {
        "target": problem.targets.names[tr.target], "mode": problem.mode_of(tr.target).name,
        "wavelength_um": round(lam * 1e6, 6),
        "spans": [[iso_utc(a), iso_utc(b)] for a, b in tr.spans],
        "coverage": {"points": c.points, "radial_gap_m": round(c.radial_gap_m, 3),
                     "position_angle_gap_deg": pa_gap_deg,
                     "longest_m": round(c.longest_m, 3), "shortest_m": round(c.shortest_m, 3),
                     "fill": round(c.fill, 4), "fill_radius_m": round(c.fill_radius_m, 3),
                     "disk_radius_m": round(c.disk_radius_m, 3)},
        "baselines": [
            {"name": name, "length_m": round(float(tr.lengths_m[p]), 3),
             "samples": [{"utc": iso_utc(float(t)), "u_m": round(float(x[0]), 4),
                          "v_m": round(float(x[1]), 4), "w_m": round(float(x[2]), 4),
                          "u_mlambda": round(float(x[0]) / lam / 1e6, 5),
                          "v_mlambda": round(float(x[1]) / lam / 1e6, 5)}
                         for t, x in zip(tr.t_s, tr.uvw_m[p], strict=True)]}
            for p, name in enumerate(tr.baselines)
        ],
    }  # fmt: skip
