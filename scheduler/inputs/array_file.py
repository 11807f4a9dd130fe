"""Load and validate an array file (TOML) into an :class:`~scheduler.model.array.ArrayModel`.

Every problem in the file is collected and raised together as one
:class:`~scheduler.model.errors.InputError`; each names the key (``stations[3].east_m``) and
the bad value.  Degrees in the file become radians in the model.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

from scheduler.inputs.choices_table import read_fixed_delays, read_routing
from scheduler.inputs.modes_table import read_modes
from scheduler.inputs.toml_file import read_toml
from scheduler.model.array import (
    ArrayModel,
    Configuration,
    DelayLine,
    Limits,
    Overheads,
    Site,
    Station,
)
from scheduler.model.errors import ProblemList

_TOP = {"site", "limits", "overheads", "stations", "delay_lines", "configurations", "modes",
        "fixed_delays", "routing"}
_SITE = {"name", "latitude_deg", "longitude_deg", "height_m"}
_LIMITS = {
    "min_altitude_deg",
    "max_altitude_deg",
    "sun_altitude_max_deg",
    "moon_separation_min_deg",
    "sun_separation_min_deg",
    "wind_halfwidth_deg",
}
#: limits without a unit to convert, with their allowed ranges
_LIMITS_PLAIN = {"min_squared_visibility": (0.0, 1.0), "calibrator_error_max": (0.0, 1.0),
                 "diameter_error_fraction": (0.0, 1.0), "wind_speed_max_m_s": (0.0, math.inf)}
_OVERHEADS = {"acquisition_s", "slew_rate_deg_s", "settle_s"}
_STATION_REQ = {"name", "east_m", "north_m", "up_m", "internal_path_m"}
_STATION_OPT = {"horizon"}
_LINE_REQ = {"name", "opd_min_m", "opd_max_m", "max_rate_m_s"}
_CONFIG_REQ = {"name", "feeds"}
_CONFIG_OPT = {"fixed_offsets_m", "description"}


class _Reader:
    """Typed access to TOML tables that records problems instead of raising."""

    def __init__(self, problems: ProblemList):
        self.p = problems

    def keys(self, table: Any, where: str, required: set[str],
             optional: set[str] | frozenset[str] = frozenset()) -> bool:  # fmt: skip
        if not isinstance(table, dict):
            self.p.add(where, f"must be a table, got {type(table).__name__}")
            return False
        for key in sorted(required - table.keys()):
            self.p.add(f"{where}.{key}" if where else key, "missing required key")
        for key in sorted(table.keys() - required - optional):
            allowed = sorted(required | optional)
            self.p.add(f"{where}.{key}" if where else key, f"unknown key (allowed: {allowed})")
        return True

    def number(self, table: dict, key: str, where: str, default: float | None = None) -> float:
        if key not in table:
            return math.nan if default is None else default
        value = table[key]
        if (
            isinstance(value, bool)
            or not isinstance(value, int | float)
            or not math.isfinite(value)
        ):
            self.p.add(f"{where}.{key}", f"must be a finite number, got {value!r}")
            return math.nan
        return float(value)

    def name(self, table: dict, key: str, where: str) -> str:
        value = table.get(key, "")
        if key in table and (not isinstance(value, str) or not value.strip()):
            self.p.add(f"{where}.{key}", f"must be a non-empty string, got {value!r}")
            return ""
        return value if isinstance(value, str) else ""

    def unique(self, names: list[str], where: str) -> None:
        seen: set[str] = set()
        for i, n in enumerate(names):
            if n and n in seen:
                self.p.add(f"{where}[{i}].name", f"duplicate name {n!r}")
            seen.add(n)


def load_array(path: str | Path) -> ArrayModel:
    """Read an array file; raise :class:`InputError` listing every problem in it."""
    return parse_array(read_toml(path), str(path))


def parse_array(data: dict, source: str = "<array>") -> ArrayModel:
    """Validate a parsed TOML document; see :func:`load_array`."""
    problems = ProblemList(source)
    r = _Reader(problems)
    r.keys(data, "", {"site", "stations", "delay_lines", "configurations"}, _TOP)

    site = _site(data.get("site", {}), r)
    limits = _limits(data.get("limits", {}), r)
    overheads = _overheads(data.get("overheads", {}), r)
    stations = [_station(t, f"stations[{i}]", r) for i, t in enumerate(_list(data, "stations", r))]
    lines = [_line(t, f"delay_lines[{i}]", r) for i, t in enumerate(_list(data, "delay_lines", r))]
    r.unique([s.name for s in stations], "stations")
    r.unique([d.name for d in lines], "delay_lines")
    configs = [
        _configuration(t, f"configurations[{i}]", r, stations, lines)
        for i, t in enumerate(_list(data, "configurations", r))
    ]
    r.unique([c.name for c in configs], "configurations")
    modes = read_modes(data.get("modes"), r.p)
    fixed = read_fixed_delays(data.get("fixed_delays"), lines, r.p)
    free = read_routing(data.get("routing"), r.p)
    problems.raise_if_any()
    return ArrayModel(site, limits, overheads, tuple(stations), tuple(lines), tuple(configs),
                      source, modes, fixed, free)  # fmt: skip


def _list(data: dict, key: str, r: _Reader) -> list:
    value = data.get(key, [])
    if not isinstance(value, list):
        r.p.add(key, "must be an array of tables ([[" + key + "]])")
        return []
    if key in data and not value:
        r.p.add(key, "must list at least one entry")
    return value


def _site(t: Any, r: _Reader) -> Site:
    if not r.keys(t, "site", _SITE):
        return Site("", 0.0, 0.0, 0.0)
    lat = r.number(t, "latitude_deg", "site")
    lon = r.number(t, "longitude_deg", "site")
    if not -90.0 <= lat <= 90.0 and not math.isnan(lat):
        r.p.add("site.latitude_deg", f"{lat} is out of range [-90, 90]")
    if not -180.0 <= lon <= 360.0 and not math.isnan(lon):
        r.p.add("site.longitude_deg", f"{lon} is out of range [-180, 360]")
    height = r.number(t, "height_m", "site")
    if not -500.0 <= height <= 9000.0 and not math.isnan(height):
        r.p.add("site.height_m", f"{height} is out of range [-500, 9000]")
    return Site(r.name(t, "name", "site"), math.radians(lat), math.radians(lon), height)


def _limits(t: Any, r: _Reader) -> Limits:
    if not r.keys(t, "limits", set(), _LIMITS | set(_LIMITS_PLAIN)):
        return Limits()
    d = Limits()
    deg = {
        k: r.number(t, k, "limits", math.degrees(getattr(d, k.replace("_deg", "_rad"))))
        for k in _LIMITS
    }
    if not 0.0 <= deg["min_altitude_deg"] < deg["max_altitude_deg"] <= 90.0:
        r.p.add(
            "limits.min_altitude_deg",
            f"need 0 <= min_altitude_deg ({deg['min_altitude_deg']}) < max_altitude_deg "
            f"({deg['max_altitude_deg']}) <= 90",
        )
    if not -90.0 <= deg["sun_altitude_max_deg"] <= 0.0:
        r.p.add("limits.sun_altitude_max_deg", f"{deg['sun_altitude_max_deg']} is not in [-90, 0]")
    for k in ("moon_separation_min_deg", "sun_separation_min_deg"):
        if not 0.0 <= deg[k] <= 180.0:
            r.p.add(f"limits.{k}", f"{deg[k]} is not in [0, 180]")
    plain = {}
    for key, (lo, hi) in _LIMITS_PLAIN.items():
        plain[key] = r.number(t, key, "limits", getattr(d, key))
        if not lo <= plain[key] <= hi:
            r.p.add(f"limits.{key}", f"{plain[key]} is not in [{lo}, {hi}]")
    if not 0.0 <= deg["wind_halfwidth_deg"] <= 180.0:
        r.p.add("limits.wind_halfwidth_deg", f"{deg['wind_halfwidth_deg']} is not in [0, 180]")
    return Limits(**{k.replace("_deg", "_rad"): math.radians(v) for k, v in deg.items()},
                  **plain)  # fmt: skip


def _overheads(t: Any, r: _Reader) -> Overheads:
    if not r.keys(t, "overheads", set(), _OVERHEADS):
        return Overheads()
    d = Overheads()
    acq = r.number(t, "acquisition_s", "overheads", d.acquisition_s)
    rate = r.number(t, "slew_rate_deg_s", "overheads", math.degrees(d.slew_rate_rad_s))
    settle = r.number(t, "settle_s", "overheads", d.settle_s)
    for key, v in (("acquisition_s", acq), ("settle_s", settle)):
        if v < 0:
            r.p.add(f"overheads.{key}", f"must not be negative, got {v}")
    if not rate > 0:
        r.p.add("overheads.slew_rate_deg_s", f"must be positive, got {rate}")
    return Overheads(acq, math.radians(rate), settle)


def _station(t: Any, where: str, r: _Reader) -> Station:
    if not r.keys(t, where, _STATION_REQ, _STATION_OPT):
        return Station("", 0, 0, 0, 0)
    horizon: list[tuple[float, float]] = []
    raw = t.get("horizon", [])
    if not isinstance(raw, list):
        r.p.add(f"{where}.horizon", "must be a list of [azimuth_deg, min_altitude_deg] pairs")
        raw = []
    for j, pair in enumerate(raw):
        ok = isinstance(pair, list) and len(pair) == 2
        ok = ok and all(isinstance(v, int | float) and not isinstance(v, bool) for v in pair)
        if not ok or not (0.0 <= pair[0] <= 360.0 and -90.0 <= pair[1] <= 90.0):
            r.p.add(
                f"{where}.horizon[{j}]",
                f"must be [azimuth_deg in 0..360, min_altitude_deg in -90..90], got {pair!r}",
            )
            continue
        horizon.append((math.radians(pair[0]), math.radians(pair[1])))
    horizon.sort()
    return Station(
        r.name(t, "name", where),
        r.number(t, "east_m", where),
        r.number(t, "north_m", where),
        r.number(t, "up_m", where),
        r.number(t, "internal_path_m", where),
        tuple(horizon),
    )


def _line(t: Any, where: str, r: _Reader) -> DelayLine:
    if not r.keys(t, where, _LINE_REQ):
        return DelayLine("", 0, 1, 1)
    lo = r.number(t, "opd_min_m", where)
    hi = r.number(t, "opd_max_m", where)
    rate = r.number(t, "max_rate_m_s", where)
    if lo >= hi:
        r.p.add(f"{where}.opd_min_m", f"opd_min_m ({lo}) must be less than opd_max_m ({hi})")
    if not rate > 0 and not math.isnan(rate):
        r.p.add(f"{where}.max_rate_m_s", f"must be positive, got {rate}")
    return DelayLine(r.name(t, "name", where), lo, hi, rate)


def _configuration(t: Any, where: str, r: _Reader, stations, lines) -> Configuration:
    if not r.keys(t, where, _CONFIG_REQ, _CONFIG_OPT):
        return Configuration("", ())
    station_names = {s.name for s in stations}
    line_names = {d.name for d in lines}
    feeds = t.get("feeds", {})
    offsets = t.get("fixed_offsets_m", {})
    if not isinstance(feeds, dict) or len(feeds) < 2:
        r.p.add(f"{where}.feeds", "must map at least two delay lines to stations")
        feeds = feeds if isinstance(feeds, dict) else {}
    used: dict[str, str] = {}
    for line, station in feeds.items():
        if line not in line_names:
            r.p.add(f"{where}.feeds.{line}", f"delay line {line!r} does not exist")
        if not isinstance(station, str) or station not in station_names:
            r.p.add(f"{where}.feeds.{line}", f"station {station!r} does not exist")
        elif station in used:
            r.p.add(f"{where}.feeds.{line}", f"station {station!r} already feeds {used[station]!r}")
        else:
            used[station] = line
    if not isinstance(offsets, dict):
        r.p.add(f"{where}.fixed_offsets_m", "must map delay lines to metres")
        offsets = {}
    fixed: list[tuple[str, float]] = []
    for line in offsets:
        if line not in feeds:
            r.p.add(f"{where}.fixed_offsets_m.{line}", f"delay line {line!r} is not fed here")
        value = r.number(offsets, line, f"{where}.fixed_offsets_m")
        fixed.append((line, value))
    return Configuration(
        r.name(t, "name", where),
        tuple((ln, st) for ln, st in feeds.items() if isinstance(st, str)),
        tuple(fixed),
    )
