"""Target catalogs: load, validate and hold targets as arrays.

A catalog is CSV, ECSV or VOTable with one row per target (columns in README.md).
Positions are ICRS at epoch J2000.0, in decimal degrees or sexagesimal (``hh:mm:ss.s``
for right ascension, ``+dd:mm:ss`` for declination).  Unknown columns are kept in
:attr:`Targets.extra` and passed through to outputs.
"""

from __future__ import annotations

import io
import math
import re
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

import numpy as np
import pandas as pd

from scheduler.errors import InputError, Problem, ProblemList

KINDS = ("science", "calibrator")
REQUIRED = ("name", "ra", "dec", "duration_min")
KNOWN = REQUIRED + (
    "kind", "program", "priority", "visits", "min_separation_min", "needs_calibrator",
    "mag", "diameter_mas", "pm_ra_mas_yr", "pm_dec_mas_yr", "window_start_utc",
    "window_end_utc",
)  # fmt: skip
MAS_TO_RAD = math.pi / (180.0 * 3600.0 * 1000.0)
J2000_UNIX_S = 946727935.816  # 2000-01-01T12:00:00 TT as a POSIX UTC timestamp


@dataclass(frozen=True, eq=False)
class Targets:
    """N targets as parallel arrays (SI inside: radians, seconds).

    ``window_start_s`` / ``window_end_s`` are POSIX UTC seconds of a target's own
    time-critical window, NaN where it has none.  ``diameter_rad`` and ``mag`` are NaN
    where not given.
    """

    names: tuple[str, ...]
    ra_rad: np.ndarray
    dec_rad: np.ndarray
    pm_ra_rad_yr: np.ndarray  # includes the cos(dec) factor
    pm_dec_rad_yr: np.ndarray
    is_science: np.ndarray
    program: tuple[str, ...]
    priority: np.ndarray
    duration_s: np.ndarray
    visits: np.ndarray
    min_separation_s: np.ndarray
    needs_calibrator: np.ndarray
    mag: np.ndarray
    diameter_rad: np.ndarray
    window_start_s: np.ndarray
    window_end_s: np.ndarray
    extra: pd.DataFrame
    source: str = ""

    def __len__(self) -> int:
        return len(self.names)

    def index(self, name: str) -> int:
        try:
            return self.names.index(name)
        except ValueError:
            raise KeyError(f"target {name!r} is not in {self.source or 'the catalog'}") from None

    def subset(self, idx) -> Targets:
        """The targets at integer positions (or boolean mask) ``idx``, in that order."""
        idx = np.flatnonzero(idx) if np.asarray(idx).dtype == bool else np.asarray(idx, int)
        pick = {}
        for f in self.__dataclass_fields__:
            v = getattr(self, f)
            if isinstance(v, np.ndarray):
                pick[f] = v[idx]
            elif isinstance(v, tuple):
                pick[f] = tuple(v[i] for i in idx)
            elif isinstance(v, pd.DataFrame):
                pick[f] = v.iloc[idx].reset_index(drop=True)
            else:
                pick[f] = v
        return Targets(**pick)

    def kind(self, i: int) -> str:
        return "science" if self.is_science[i] else "calibrator"


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


def parse_utc(text: str) -> float:
    """POSIX seconds from an ISO 8601 UTC string (a trailing ``Z`` or offset allowed)."""
    dt = datetime.fromisoformat(str(text).strip().replace("Z", "+00:00"))
    if dt.tzinfo is None:
        dt = dt.replace(tzinfo=UTC)
    return dt.timestamp()


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


def load_targets(path: str | Path) -> Targets:
    """Load a target catalog; raise :class:`InputError` listing every problem."""
    return parse_targets(read_table(path), str(path))


def _bool(text: str) -> bool:
    t = text.strip().lower()
    if t in ("true", "yes", "y", "1", "t"):
        return True
    if t in ("false", "no", "n", "0", "f"):
        return False
    raise ValueError(f"{text!r} is not true/false")


def parse_targets(frame: pd.DataFrame, source: str = "<targets>") -> Targets:
    """Validate a catalog table (all cells as strings); see :func:`load_targets`."""
    p = ProblemList(source)
    frame = frame.rename(columns=lambda c: str(c).strip())
    for col in REQUIRED:
        if col not in frame.columns:
            p.add(f"column {col!r}", "missing required column")
    p.raise_if_any()
    n = len(frame)
    first = int(frame.attrs.get("header_line", 1)) + 1  # file line of the first data row
    cols = {c: frame[c].astype(str).str.strip().tolist() for c in frame.columns}
    get = lambda c, i, d="": cols[c][i] if c in cols and cols[c][i] != "" else d  # noqa: E731

    out = {k: np.full(n, np.nan) for k in (
        "ra", "dec", "pm_ra", "pm_dec", "priority", "duration", "visits", "sep", "mag", "diam",
        "ws", "we")}  # fmt: skip
    science = np.ones(n, bool)
    needs = np.ones(n, bool)
    names: list[str] = []
    seen: dict[str, int] = {}

    def number(col, i, default, lo=-math.inf, hi=math.inf, lo_open=False):
        text = get(col, i)
        if text == "":
            return default
        try:
            v = float(text)
        except ValueError:
            p.add(f"row {i + first}, column {col!r}", f"{text!r} is not a number")
            return math.nan
        if not math.isfinite(v) or v < lo or v > hi or (lo_open and v <= lo):
            rng = f"({lo}, {hi}]" if lo_open else f"[{lo}, {hi}]"
            p.add(f"row {i + first}, column {col!r}", f"{v} is out of range {rng}")
        return v

    for i in range(n):
        row = f"row {i + first}"  # rows are counted as lines of the file
        name = get("name", i)
        if not name:
            p.add(f"{row}, column 'name'", "empty name")
        elif name in seen:
            p.add(f"{row}, column 'name'", f"duplicate name {name!r} (first at row {seen[name]})")
        else:
            seen[name] = i + first
        names.append(name)
        for col, hours, lo, hi, key in (
            ("ra", True, 0.0, 360.0, "ra"),
            ("dec", False, -90, 90, "dec"),
        ):
            try:
                v = parse_angle(get(col, i), hours)
                if not (lo <= v < hi if col == "ra" else lo <= v <= hi):
                    p.add(f"{row}, column {col!r}", f"{get(col, i)!r} is out of range")
                out[key][i] = v
            except ValueError as exc:
                p.add(f"{row}, column {col!r}", str(exc))
        kind = get("kind", i, "science").lower()
        if kind not in KINDS:
            p.add(f"{row}, column 'kind'", f"{kind!r} is not one of {list(KINDS)}")
        science[i] = kind != "calibrator"
        out["priority"][i] = number("priority", i, 1.0 if science[i] else 0.0, 0.0)
        if science[i] and not out["priority"][i] > 0:
            p.add(f"{row}, column 'priority'", "a science target needs a positive priority")
        out["duration"][i] = number("duration_min", i, math.nan, 0.0, 24 * 60.0, lo_open=True)
        if get("duration_min", i) == "":
            p.add(f"{row}, column 'duration_min'", "empty value (minutes on target needed)")
        out["visits"][i] = number("visits", i, 1.0, 1.0, 100.0)
        if out["visits"][i] != round(out["visits"][i]):
            p.add(f"{row}, column 'visits'", f"{get('visits', i)!r} is not a whole number")
        out["sep"][i] = number("min_separation_min", i, 0.0, 0.0, 24 * 60.0)
        out["mag"][i] = number("mag", i, math.nan, -30.0, 40.0)
        out["diam"][i] = number("diameter_mas", i, math.nan, 0.0, 1e6)
        out["pm_ra"][i] = number("pm_ra_mas_yr", i, 0.0)
        out["pm_dec"][i] = number("pm_dec_mas_yr", i, 0.0)
        try:
            needs[i] = _bool(get("needs_calibrator", i, "true" if science[i] else "false"))
        except ValueError as exc:
            p.add(f"{row}, column 'needs_calibrator'", str(exc))
        for col, key in (("window_start_utc", "ws"), ("window_end_utc", "we")):
            text = get(col, i)
            if text:
                try:
                    out[key][i] = parse_utc(text)
                except ValueError:
                    p.add(f"{row}, column {col!r}", f"{text!r} is not an ISO 8601 UTC time")
        if np.isnan(out["ws"][i]) != np.isnan(out["we"][i]):
            p.add(row, "window_start_utc and window_end_utc must be given together")
        elif out["we"][i] <= out["ws"][i]:
            p.add(f"{row}, column 'window_end_utc'", "window ends before it starts")
    if n == 0:
        p.add("", "the catalog has no rows")
    p.raise_if_any()
    extra = frame[[c for c in frame.columns if c not in KNOWN]].reset_index(drop=True)
    return Targets(
        names=tuple(names),
        ra_rad=np.radians(out["ra"]),
        dec_rad=np.radians(out["dec"]),
        pm_ra_rad_yr=out["pm_ra"] * MAS_TO_RAD,
        pm_dec_rad_yr=out["pm_dec"] * MAS_TO_RAD,
        is_science=science,
        program=tuple(get("program", i) for i in range(n)),
        priority=out["priority"],
        duration_s=out["duration"] * 60.0,
        visits=out["visits"].astype(int),
        min_separation_s=out["sep"] * 60.0,
        needs_calibrator=needs & science,
        mag=out["mag"],
        diameter_rad=out["diam"] * MAS_TO_RAD,
        window_start_s=out["ws"],
        window_end_s=out["we"],
        extra=extra,
        source=source,
    )


def positions_at(targets: Targets, t_s: float) -> tuple[np.ndarray, np.ndarray]:
    """ICRS (ra, dec) in radians at POSIX time ``t_s``, proper motion applied linearly
    from epoch J2000.0 (ample for the arcsecond-level needs of scheduling)."""
    years = (t_s - J2000_UNIX_S) / (365.25 * 86400.0)
    dec = targets.dec_rad + targets.pm_dec_rad_yr * years
    ra = targets.ra_rad + targets.pm_ra_rad_yr * years / np.cos(targets.dec_rad)
    return np.mod(ra, 2 * np.pi), dec
