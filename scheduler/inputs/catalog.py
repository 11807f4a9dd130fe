"""Target catalogs: load, validate and hold targets as arrays.

A catalog is CSV, ECSV or VOTable with one row per target (columns in README.md).
Positions are ICRS at epoch J2000.0, in decimal degrees or sexagesimal (``hh:mm:ss.s``
for right ascension, ``+dd:mm:ss`` for declination).  Unknown columns are kept in
:attr:`~scheduler.model.targets.Targets.extra` and passed through to outputs.
"""

from __future__ import annotations

import io
import math
import re
from collections.abc import Sequence
from pathlib import Path

import numpy as np
import pandas as pd

from scheduler.model.errors import InputError, Problem, ProblemList
from scheduler.model.targets import (
    HOUR_ANGLE_RAD_PER_H,
    MAS_TO_RAD,
    Targets,
    spread_separation_s,
)
from scheduler.model.times import parse_utc

KINDS = ("science", "calibrator")
REQUIRED = ("name", "ra", "dec", "duration_min")
KNOWN = REQUIRED + (
    "kind", "program", "priority", "visits", "min_visits", "min_separation_min",
    "needs_calibrator",
    "mag", "diameter_mas", "pm_ra_mas_yr", "pm_dec_mas_yr", "window_start_utc",
    "window_end_utc", "mode", "diameter_err_mas", "limb_darkening", "ha_spread_h",
)  # fmt: skip
BAND_COLUMN = re.compile(r"^mag_([A-Za-z][A-Za-z0-9]*)$")


_SEXA = re.compile(r"^\s*([+-]?)(\d{1,3})[:\s]+(\d{1,2})[:\s]+(\d{1,2}(?:\.\d*)?)\s*$")


def parse_angle(text, hours: bool) -> float:
    """Degrees from decimal degrees or sexagesimal (hours for RA when ``hours``)."""
    if isinstance(text, int | float) and not isinstance(text, bool):
        return float(text)
    s = str(text).strip()
    m = _SEXA.match(s)
    if m:
        sign, a, b, c = m.groups()
        if int(b) >= 60 or float(c) >= 60:
            raise ValueError(f"{s!r}: minutes and seconds must be below 60")
        value = int(a) + int(b) / 60.0 + float(c) / 3600.0
        value = -value if sign == "-" else value
        return value * 15.0 if hours else value
    try:
        return float(s)
    except ValueError:
        unit = "hh:mm:ss.s" if hours else "+dd:mm:ss"
        raise ValueError(f"{s!r} is neither decimal degrees nor {unit}") from None


def read_table(path: str | Path) -> pd.DataFrame:
    """Read CSV, ECSV or VOTable into a DataFrame of strings and numbers."""
    path = Path(path)
    if not path.exists():
        raise InputError(Problem(str(path), "", "file not found"))
    suffix = path.suffix.lower()
    try:
        if suffix in (".csv", ".txt"):
            lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
            skip = next((k for k, ln in enumerate(lines) if not ln.startswith("#")), len(lines))
            frame = pd.read_csv(
                io.StringIO("".join(lines[skip:])), dtype=str, keep_default_na=False
            )
            frame.attrs["header_line"] = skip + 1
            return frame
        from astropy.table import Table

        fmt = (
            "ascii.ecsv" if suffix == ".ecsv" else "votable" if suffix in (".xml", ".vot") else None
        )
        table = Table.read(path, format=fmt) if fmt else Table.read(path)
        frame = table.to_pandas()
        return frame.astype(object).where(frame.notna(), "").astype(str)
    except InputError:
        raise
    except Exception as exc:  # any reader failure is a bad file, reported in one line
        msg = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        raise InputError(Problem(str(path), "", f"cannot read table: {msg}")) from None


def load_targets(path: str | Path, modes: Sequence[str] | None = None) -> Targets:
    """Load a target catalog; raise :class:`InputError` listing every problem.  With
    ``modes`` (the array's mode names) each row's ``mode`` must be one of them."""
    return parse_targets(read_table(path), str(path), modes)


def _bool(text: str) -> bool:
    t = text.strip().lower()
    if t in ("true", "yes", "y", "1", "t"):
        return True
    if t in ("false", "no", "n", "0", "f"):
        return False
    raise ValueError(f"{text!r} is not true/false")


class _Rows:
    """Cell access by (column, row) with problems recorded against file lines."""

    def __init__(self, frame: pd.DataFrame, p: ProblemList):
        self.p = p
        self.first = int(frame.attrs.get("header_line", 1)) + 1  # file line of data row 0
        self.cols = {c: frame[c].astype(str).str.strip().tolist() for c in frame.columns}

    def where(self, i: int, col: str | None = None) -> str:
        row = f"row {i + self.first}"  # rows are counted as lines of the file
        return f"{row}, column {col!r}" if col else row

    def get(self, col: str, i: int, default: str = "") -> str:
        cells = self.cols.get(col)
        return cells[i] if cells is not None and cells[i] != "" else default

    def number(self, col: str, i: int, default: float, lo: float = -math.inf,
               hi: float = math.inf, lo_open: bool = False) -> float:  # fmt: skip
        text = self.get(col, i)
        if text == "":
            return default
        try:
            v = float(text)
        except ValueError:
            self.p.add(self.where(i, col), f"{text!r} is not a number")
            return math.nan
        if not math.isfinite(v) or v < lo or v > hi or (lo_open and v <= lo):
            rng = f"({lo}, {hi}]" if lo_open else f"[{lo}, {hi}]"
            self.p.add(self.where(i, col), f"{v} is out of range {rng}")
        return v


_NUMERIC = ("ra", "dec", "pm_ra", "pm_dec", "priority", "duration", "visits", "min_visits",
            "sep", "mag", "diam", "ws", "we", "diam_err", "limb", "spread")  # fmt: skip


def _position(r: _Rows, i: int, out: dict[str, np.ndarray]) -> None:
    for col, hours, lo, hi in (("ra", True, 0.0, 360.0), ("dec", False, -90.0, 90.0)):
        try:
            v = parse_angle(r.get(col, i), hours)
        except ValueError as exc:
            r.p.add(r.where(i, col), str(exc))
            continue
        if not (lo <= v < hi if col == "ra" else lo <= v <= hi):
            r.p.add(r.where(i, col), f"{r.get(col, i)!r} is out of range")
        out[col][i] = v


def _visit_columns(r: _Rows, i: int, science: bool, out: dict[str, np.ndarray]) -> None:
    out["priority"][i] = r.number("priority", i, 1.0 if science else 0.0, 0.0)
    if science and not out["priority"][i] > 0:
        r.p.add(r.where(i, "priority"), "a science target needs a positive priority")
    out["duration"][i] = r.number("duration_min", i, math.nan, 0.0, 24 * 60.0, lo_open=True)
    if r.get("duration_min", i) == "":
        r.p.add(r.where(i, "duration_min"), "empty value (minutes on target needed)")
    out["visits"][i] = r.number("visits", i, 1.0, 1.0, 100.0)
    if out["visits"][i] != round(out["visits"][i]):
        r.p.add(r.where(i, "visits"), f"{r.get('visits', i)!r} is not a whole number")
    out["min_visits"][i] = r.number("min_visits", i, out["visits"][i], 1.0, 100.0)
    if out["min_visits"][i] != round(out["min_visits"][i]) or out["min_visits"][i] > out[
            "visits"][i]:  # fmt: skip
        r.p.add(r.where(i, "min_visits"), f"{r.get('min_visits', i)!r} is not a whole number "
                f"from 1 to visits ({r.get('visits', i) or 1})")  # fmt: skip
    out["sep"][i] = r.number("min_separation_min", i, 0.0, 0.0, 24 * 60.0)
    out["mag"][i] = r.number("mag", i, math.nan, -30.0, 40.0)
    out["diam"][i] = r.number("diameter_mas", i, math.nan, 0.0, 1e6)
    out["diam_err"][i] = r.number("diameter_err_mas", i, math.nan, 0.0, 1e6)
    out["limb"][i] = r.number("limb_darkening", i, math.nan, 0.0, 1.0)
    out["spread"][i] = r.number("ha_spread_h", i, 0.0, 0.0, 12.0)
    out["pm_ra"][i] = r.number("pm_ra_mas_yr", i, 0.0)
    out["pm_dec"][i] = r.number("pm_dec_mas_yr", i, 0.0)


def _window(r: _Rows, i: int, out: dict[str, np.ndarray]) -> None:
    for col, key in (("window_start_utc", "ws"), ("window_end_utc", "we")):
        text = r.get(col, i)
        if text:
            try:
                out[key][i] = parse_utc(text)
            except ValueError:
                r.p.add(r.where(i, col), f"{text!r} is not an ISO 8601 UTC time")
    if np.isnan(out["ws"][i]) != np.isnan(out["we"][i]):
        r.p.add(r.where(i), "window_start_utc and window_end_utc must be given together")
    elif out["we"][i] <= out["ws"][i]:
        r.p.add(r.where(i, "window_end_utc"), "window ends before it starts")


def _name(r: _Rows, i: int, seen: dict[str, int]) -> str:
    name = r.get("name", i)
    if not name:
        r.p.add(r.where(i, "name"), "empty name")
    elif name in seen:
        r.p.add(r.where(i, "name"), f"duplicate name {name!r} (first at row {seen[name]})")
    else:
        seen[name] = i + r.first
    return name


def _bands(r: _Rows, frame: pd.DataFrame, n: int) -> tuple[tuple[str, np.ndarray], ...]:
    """Magnitudes per band from the ``mag_<band>`` columns (NaN where empty)."""
    out = []
    for col in frame.columns:
        m = BAND_COLUMN.match(str(col))
        if m:
            values = np.array([r.number(str(col), i, math.nan, -30.0, 40.0) for i in range(n)])
            out.append((m.group(1), values))
    return tuple(out)


def parse_targets(frame: pd.DataFrame, source: str = "<targets>",
                  modes: Sequence[str] | None = None) -> Targets:  # fmt: skip
    """Validate a catalog table (all cells as strings); see :func:`load_targets`."""
    p = ProblemList(source)
    frame = frame.rename(columns=lambda c: str(c).strip())
    for col in REQUIRED:
        if col not in frame.columns:
            p.add(f"column {col!r}", "missing required column")
    p.raise_if_any()
    n = len(frame)
    r = _Rows(frame, p)
    out = {k: np.full(n, np.nan) for k in _NUMERIC}
    science, needs = np.ones(n, bool), np.ones(n, bool)
    names: list[str] = []
    seen: dict[str, int] = {}
    for i in range(n):
        names.append(_name(r, i, seen))
        _position(r, i, out)
        kind = r.get("kind", i, "science").lower()
        if kind not in KINDS:
            p.add(r.where(i, "kind"), f"{kind!r} is not one of {list(KINDS)}")
        science[i] = kind != "calibrator"
        _visit_columns(r, i, bool(science[i]), out)
        try:
            needs[i] = _bool(r.get("needs_calibrator", i, "true" if science[i] else "false"))
        except ValueError as exc:
            p.add(r.where(i, "needs_calibrator"), str(exc))
        _window(r, i, out)
        _mode(r, i, modes)
    bands = _bands(r, frame, n)
    if n == 0:
        p.add("", "the catalog has no rows")
    p.raise_if_any()
    extra = frame[[c for c in frame.columns if c not in KNOWN and not BAND_COLUMN.match(str(c))]
                  ].reset_index(drop=True)  # fmt: skip
    return Targets(
        names=tuple(names), ra_rad=np.radians(out["ra"]), dec_rad=np.radians(out["dec"]),
        pm_ra_rad_yr=out["pm_ra"] * MAS_TO_RAD, pm_dec_rad_yr=out["pm_dec"] * MAS_TO_RAD,
        is_science=science, program=tuple(r.get("program", i) for i in range(n)),
        priority=out["priority"], duration_s=out["duration"] * 60.0,
        visits=out["visits"].astype(int), min_visits=np.nan_to_num(out["min_visits"], nan=1.0)
        .astype(int), min_separation_s=spread_separation_s(
            out["sep"] * 60.0, out["spread"] * HOUR_ANGLE_RAD_PER_H, out["duration"] * 60.0),
        needs_calibrator=needs & science, mag=out["mag"], diameter_rad=out["diam"] * MAS_TO_RAD,
        window_start_s=out["ws"], window_end_s=out["we"], extra=extra, source=source,
        mode=tuple(r.get("mode", i) for i in range(n)), band_mags=bands,
        diameter_err_rad=out["diam_err"] * MAS_TO_RAD, limb_darkening=out["limb"],
        row=np.arange(n) + r.first, ha_spread_rad=out["spread"] * HOUR_ANGLE_RAD_PER_H,
    )  # fmt: skip


def _mode(r: _Rows, i: int, modes: Sequence[str] | None) -> None:
    """A row's ``mode`` must be one of the array's (empty: the array's first mode)."""
    m = r.get("mode", i)
    if modes is not None and m and m not in modes:
        r.p.add(r.where(i, "mode"), f"{m!r} is not a mode of the array (one of {sorted(modes)})")
