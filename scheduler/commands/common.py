"""Loading what every command needs: the array, a configuration, a catalog, a night."""

from __future__ import annotations

import json
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

from scheduler.array_file import load_array
from scheduler.catalog import Targets, load_targets
from scheduler.constraints import SkyContext
from scheduler.errors import InputError, Problem
from scheduler.model import ArrayModel, Beams
from scheduler.night import Night, find_night, parse_night


@dataclass(frozen=True)
class Inputs:
    array: ArrayModel
    beams: Beams
    targets: Targets
    night: Night

    def context(self) -> SkyContext:
        return SkyContext.prepare(self.array, self.beams, self.targets, self.night)


def load_beams(array: ArrayModel, config: str, out: frozenset[str] = frozenset()) -> Beams:
    try:
        return array.beams(config, out)
    except KeyError as exc:
        raise InputError(Problem("--config", "", f"configuration {exc.args[0]}")) from None


def load_inputs(array_path, config: str, targets: Targets | str | Path, night_text: str) -> Inputs:
    """Array, configuration, catalog and night; every problem raised as InputError."""
    array = load_array(array_path)
    beams = load_beams(array, config)
    if not isinstance(targets, Targets):
        targets = load_targets(targets)
    night = find_night(array, parse_night(night_text))
    return Inputs(array, beams, targets, night)


def demo_file(name: str) -> Path:
    """A file of the demo scenario: ``catalogs/`` in the current folder, else the copy
    installed with the package, else ``catalogs/`` beside the package's source tree (an
    editable install)."""
    places = [Path.cwd() / "catalogs" / name]
    try:
        places.append(Path(str(resources.files("scheduler.demo").joinpath(name))))
    except ModuleNotFoundError:
        pass
    places.append(Path(__file__).resolve().parents[2] / "catalogs" / name)
    for place in places:
        if place.exists():
            return place
    raise InputError(Problem("demo", "", f"the demo file {name} is not installed"))


def print_json(data) -> None:
    print(json.dumps(data, indent=2))


def require_matplotlib(option: str = "--plot") -> None:
    """A clear input error, before any work, when plots are asked for without matplotlib."""
    try:
        import matplotlib  # noqa: F401
    except ImportError:
        need = "needs matplotlib: pip install '.[plots]'"
        raise InputError(Problem(option, "", need)) from None
