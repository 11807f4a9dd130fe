"""What commands share: the result a command hands back to the command line, and the
loading of an array, a configuration, a catalog and a night with every problem of every
input reported together."""

from __future__ import annotations

import argparse
import math
import sys
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import Any

from rich.console import Console

from scheduler.model.array import ArrayModel, Beams
from scheduler.model.campaign import CampaignState
from scheduler.model.conditions import Conditions
from scheduler.model.errors import Gather, InputError, Problem
from scheduler.model.night import Night
from scheduler.model.problem import NightProblem
from scheduler.model.targets import Targets
from scheduler.model.times import parse_night
from scheduler.output.files import OutputPath


@dataclass
class Result:
    """What a command produced: renderables for the console (or a JSON document), the
    files to write (all or none, after the view is shown), warnings for standard error,
    and the exit status.  ``caution`` adds the advisory panel under the view."""

    view: list[Any] = field(default_factory=list)
    json: Any = None
    outputs: list[tuple[OutputPath, bytes]] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    exit_code: int = 0
    caution: bool = True


@dataclass(frozen=True)
class Inputs:
    array: ArrayModel
    beams: Beams
    targets: Targets
    night: Night
    warnings: tuple[str, ...] = ()

    conditions: Conditions = Conditions()
    campaign: CampaignState | None = None

    def problem(self) -> NightProblem:
        from scheduler.astro.problem import night_problem

        problem = night_problem(self.array, self.beams, self.targets, self.night,
                                conditions=self.conditions)  # fmt: skip
        if self.campaign is None:
            return problem
        from scheduler.queue.campaign import campaign_night

        return campaign_night(problem, self.campaign)


def check_config(array: ArrayModel | None, config: str, g: Gather) -> None:
    if array is not None and config not in {c.name for c in array.configurations}:
        try:
            array.configuration(config)
        except KeyError as exc:
            g.add("--config", "", f"configuration {exc.args[0]}")


def gather_inputs(array_path: str | Path, config: str, targets: Targets | str | Path | None,
                  night_text: str, g: Gather) -> tuple[Any, Any, Any]:  # fmt: skip
    """Array, catalog and night date, each loaded with its problems kept in ``g``
    (``targets`` may be a loaded catalog, a path, or None when it failed already)."""
    from scheduler.inputs.array_file import load_array
    from scheduler.inputs.catalog import load_targets

    array = g.take(load_array, array_path)
    if config:  # empty: the command chooses configurations itself
        check_config(array, config, g)
    modes = [m.name for m in array.modes] if array is not None else None
    cat = targets if isinstance(targets, Targets) or targets is None else g.take(
        load_targets, targets, modes)
    date = g.take(parse_night, night_text)
    return array, cat, date


def conditions_of(args: argparse.Namespace, g: Gather) -> Conditions:
    """The conditions given on the command line (None where not given: each mode's
    reference), checked."""
    values = {}
    for option, key, lo, hi in (("--seeing", "seeing", 0.05, 10.0),
                                ("--coherence-ms", "coherence_ms", 0.1, 1000.0),
                                ("--wind-speed", "wind_speed", 0.0, 100.0),
                                ("--wind-from", "wind_from", 0.0, 360.0)):  # fmt: skip
        v = getattr(args, key, None)
        if v is not None and not (math.isfinite(v) and lo <= v <= hi):
            g.add(option, "", f"{v} is not in [{lo:g}, {hi:g}]")
            v = None
        values[key] = v
    if values["wind_speed"] is not None and values["wind_from"] is None:
        g.add("--wind-speed", "", "needs --wind-from DEG, the azimuth the wind comes from")
    return Conditions(
        seeing_rad=None if values["seeing"] is None else math.radians(values["seeing"] / 3600.0),
        coherence_s=None if values["coherence_ms"] is None else values["coherence_ms"] * 1e-3,
        wind_speed_m_s=values["wind_speed"] or 0.0,
        wind_from_rad=None if values["wind_from"] is None else math.radians(values["wind_from"]),
    )  # fmt: skip


def finish_inputs(array: ArrayModel, config: str, targets: Targets, date: Any,
                  conditions: Conditions | None = None,
                  campaign: CampaignState | None = None) -> Inputs:  # fmt: skip
    """The night (NoDarkTime is an input error) and the coverage warning, once every
    input is known to be good."""
    from scheduler.astro.coverage import coverage_warning
    from scheduler.astro.night import find_night

    night = find_night(array, date)
    warning = coverage_warning(date)
    return Inputs(array, array.beams(config), targets, night, (warning,) if warning else (),
                  conditions or Conditions(), campaign)  # fmt: skip


def load_inputs(array_path: str | Path, config: str, targets: Targets | str | Path,
                night_text: str) -> Inputs:  # fmt: skip
    """Array, configuration, catalog and night; every problem raised together."""
    g = Gather()
    array, cat, date = gather_inputs(array_path, config, targets, night_text, g)
    g.raise_if_any()
    return finish_inputs(array, config, cat, date)


def demo_file(name: str) -> Path:
    """A file of the demo scenario: ``catalogs/`` in the current folder, else the copy
    installed with the package, else ``catalogs/`` beside the package's source tree (an
    editable install)."""
    places = [Path.cwd() / "catalogs" / name]
    try:
        places.append(Path(str(resources.files("scheduler.demo").joinpath(name))))
    except ModuleNotFoundError:
        pass
    places.append(Path(__file__).resolve().parents[3] / "catalogs" / name)
    for place in places:
        if place.exists():
            return place
    raise InputError(Problem("demo", "", f"the demo file {name} is not installed"))


def check_matplotlib(option: str, g: Gather) -> None:
    """A problem, before any work, when plots are asked for without matplotlib."""
    try:
        import matplotlib  # noqa: F401
    except ImportError:
        g.add(option, "", "needs matplotlib: pip install '.[plots]'")


@contextmanager
def solver_progress(console: Console, quiet: bool, label: str,
                    limit_s: float) -> Iterator[Callable[[float, float | None], None] | None]:
    """A live line with the best value, the bound and the gap while the optimiser works;
    nothing with ``quiet`` or when the output is not a terminal."""
    if quiet or not console.is_terminal:
        yield None
        return
    from rich.live import Live

    from scheduler.views.progress_line import ProgressLine

    line = ProgressLine(label, limit_s)
    with Live(line, console=console, transient=True, refresh_per_second=4):
        yield line.update


def warn(message: str) -> None:
    print(f"opdplan: warning: {message}", file=sys.stderr)


def campaign_of(args: argparse.Namespace, array: Any, targets: Any,
                g: Gather) -> tuple[CampaignState | None, list[str]]:  # fmt: skip
    """The campaign given with ``--campaign FILE`` and its visits done so far, from the
    night logs of ``--campaign-log DIR`` (None without a campaign), and warnings."""
    from scheduler.inputs.campaign_file import load_campaign, load_done

    if getattr(args, "campaign", None) is None:
        if getattr(args, "campaign_log", None) is not None:
            g.add("--campaign-log", "", "needs --campaign FILE")
        return None, []
    campaign = g.take(load_campaign, args.campaign, targets, array)
    done: tuple[Any, ...] = ()
    warnings: list[str] = []
    if args.campaign_log is not None:
        got = g.take(load_done, args.campaign_log)
        if got is not None:
            done, warnings = got
    return (CampaignState(campaign, done) if campaign is not None else None), warnings
