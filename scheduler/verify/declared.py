"""What the inputs declare, and the plan's own copy of it compared with them.

- The delay lines in use come from the array file (never from the plan): the lines the
  plan's configuration feeds, less those whose line or station is listed as out (a
  replan's ``out``).  Each line's constant path is the station's internal path plus the
  line's fixed offset (``x_i = K + p_i.s - a_i - f_i``).
- Rule ``configuration``: the plan's site, stations and delay lines (positions, internal
  paths, ranges, rates, fixed offsets, which station feeds which line) are the array
  file's.
- Rule ``rules``: the plan's ``rules`` block is the settings' rules, key for key, to a
  small relative tolerance (a plan must say it followed the rules it is checked
  against).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from scheduler.model.array import ArrayModel
from scheduler.model.plan import PlanSettings
from scheduler.verify.report import Violation
from scheduler.verify.tolerances import ARRAY_TOL_M, REL_TOL, SITE_TOL, ZERO_TOL

RULE = "configuration"


@dataclass(frozen=True, eq=False)
class LineSet:
    """The lines in use, one entry each: names, stations and (L,) or (L, 3) arrays."""

    names: tuple[str, ...]
    stations: tuple[str, ...]
    position_m: np.ndarray
    internal_m: np.ndarray
    offset_m: np.ndarray
    opd_min_m: np.ndarray
    opd_max_m: np.ndarray
    rate_m_s: np.ndarray
    masks: tuple[tuple[tuple[float, float], ...], ...]

    @property
    def path_m(self) -> np.ndarray:
        """a_i + f_i: the constant part of each light path."""
        return self.internal_m + self.offset_m

    def longest_baseline_m(self) -> float:
        p = self.position_m
        return float(np.max(np.linalg.norm(p[:, None, :] - p[None, :, :], axis=-1), initial=0.0))


def lines_in_use(array: ArrayModel, configuration: str,
                 out: frozenset[str]) -> tuple[LineSet | None, list[Violation]]:  # fmt: skip
    """The :class:`LineSet` of ``configuration`` less what is ``out``; None (with a
    violation) when the array has no such configuration."""
    config = next((c for c in array.configurations if c.name == configuration), None)
    if config is None:
        names = sorted(c.name for c in array.configurations)
        return None, [Violation(RULE, "configuration",
                                f"{configuration!r} is not a configuration of the array "
                                f"file (it has {names})")]  # fmt: skip
    known = {s.name for s in array.stations} | {d.name for d in array.delay_lines}
    found = [Violation(RULE, "out", f"{name!r} is neither a station nor a delay line of the "
                       "array file") for name in sorted(out - known)]  # fmt: skip
    feeds = [(ln, st) for ln, st in config.feeds if ln not in out and st not in out]
    stations = [array.station(st) for _, st in feeds]
    lines = [array.delay_line(ln) for ln, _ in feeds]
    offsets = dict(config.fixed_offsets_m)
    return LineSet(
        names=tuple(ln for ln, _ in feeds), stations=tuple(st for _, st in feeds),
        position_m=np.array([[s.east_m, s.north_m, s.up_m] for s in stations]).reshape(-1, 3),
        internal_m=np.array([s.internal_path_m for s in stations], float),
        offset_m=np.array([offsets.get(ln, 0.0) for ln, _ in feeds], float),
        opd_min_m=np.array([d.opd_min_m for d in lines], float),
        opd_max_m=np.array([d.opd_max_m for d in lines], float),
        rate_m_s=np.array([d.max_rate_m_s for d in lines], float),
        masks=tuple(s.horizon for s in stations),
    ), found  # fmt: skip


def _differs(a: float, b: float, tol: float) -> bool:
    return not math.isclose(a, b, rel_tol=REL_TOL, abs_tol=tol)


def _compare(where: str, stated: dict[str, Any], expected: dict[str, float | str],
             tol: float) -> list[Violation]:  # fmt: skip
    found = []
    for key, want in expected.items():
        got = stated.get(key)
        if isinstance(want, str) or not isinstance(got, int | float):
            bad = got != want
        else:
            bad = _differs(float(got), want, tol)
        if bad:
            found.append(Violation(RULE, f"{where}.{key}",
                                   f"{got!r} differs from the array file's {want!r}"))
    return found


def _site(doc: dict[str, Any], array: ArrayModel) -> list[Violation]:
    s = array.site
    want: dict[str, float | str] = {"latitude_deg": math.degrees(s.latitude_rad),
                                    "longitude_deg": math.degrees(s.longitude_rad),
                                    "height_m": s.height_m}  # fmt: skip
    return _compare("site", doc["site"], want, SITE_TOL)


def _stations(doc: dict[str, Any], array: ArrayModel, lines: LineSet) -> list[Violation]:
    stated = {s["name"]: (k, s) for k, s in enumerate(doc["stations"])}
    found = []
    if set(stated) != set(lines.stations) or len(stated) != len(doc["stations"]):
        found.append(Violation(RULE, "stations", f"lists {[s['name'] for s in doc['stations']]}, "
                               f"but the lines in use are fed by {list(lines.stations)}"))
    for name in lines.stations:
        if name in stated:
            k, entry = stated[name]
            st = array.station(name)
            want: dict[str, float | str] = {"east_m": st.east_m, "north_m": st.north_m,
                                            "up_m": st.up_m, "internal_path_m": st.internal_path_m}
            found += _compare(f"stations[{k}]", entry, want, ARRAY_TOL_M)
    return found  # fmt: skip


def _delay_lines(doc: dict[str, Any], lines: LineSet) -> list[Violation]:
    stated = {d["name"]: (k, d) for k, d in enumerate(doc["delay_lines"])}
    found = []
    if set(stated) != set(lines.names) or len(stated) != len(doc["delay_lines"]):
        names = [d["name"] for d in doc["delay_lines"]]
        found.append(Violation(RULE, "delay_lines", f"lists {names}, but the lines in use are "
                               f"{list(lines.names)}"))
    for i, name in enumerate(lines.names):
        if name in stated:
            k, entry = stated[name]
            want: dict[str, float | str] = {
                "station": lines.stations[i], "opd_min_m": float(lines.opd_min_m[i]),
                "opd_max_m": float(lines.opd_max_m[i]), "max_rate_m_s": float(lines.rate_m_s[i]),
                "fixed_offset_m": float(lines.offset_m[i])}  # fmt: skip
            found += _compare(f"delay_lines[{k}]", entry, want, ARRAY_TOL_M)
    return found


def configuration_violations(doc: dict[str, Any], array: ArrayModel,
                             lines: LineSet) -> list[Violation]:  # fmt: skip
    """Where the plan's site, stations and delay lines differ from the array file."""
    return _site(doc, array) + _stations(doc, array, lines) + _delay_lines(doc, lines)


def expected_rules(settings: PlanSettings) -> dict[str, float]:
    """The ``rules`` block a plan made under ``settings`` carries (units in the keys)."""
    return {
        "calibrator_gap_min": settings.calibrator_gap_s / 60.0,
        "calibrator_max_sep_deg": math.degrees(settings.calibrator_max_sep_rad),
        "calibrator_max_dmag": settings.calibrator_max_dmag,
        "calibrator_min_visibility": settings.calibrator_min_visibility,
        "calibrator_copies": float(settings.calibrator_copies),
        "carriage_weight": settings.carriage_weight,
        "value_per_hour": float(settings.value_per_hour),
        "strict_priority": float(settings.strict_priority),
    }


def rules_violations(stated: dict[str, Any], settings: PlanSettings) -> list[Violation]:
    """Every key of the plan's rules that is missing, unknown or has another value."""
    want = expected_rules(settings)
    found = []
    for key in sorted(set(want) | set(stated)):
        where = f"rules.{key}"
        if key not in want:
            found.append(Violation("rules", where, "is not a rule of the queue"))
        elif key not in stated:
            found.append(Violation("rules", where, f"missing (the settings say {want[key]:g})"))
        elif not math.isclose(float(stated[key]), want[key], rel_tol=REL_TOL, abs_tol=ZERO_TOL):
            found.append(Violation("rules", where, f"the plan says {stated[key]!r}, the settings "
                                   f"{want[key]:g}"))  # fmt: skip
    return found
