"""Times at the edges: ISO 8601 UTC strings, dates, and sidereal-time labels.

Inside opdplan times are POSIX UTC seconds (floats).  Outputs write ISO 8601 with a
trailing ``Z``; plan files carry milliseconds so that a stated carriage position and the
printed instant agree to well under a millimetre.
"""

from __future__ import annotations

import datetime as dt
import math

from scheduler.model.errors import InputError, Problem


def iso_utc(t_s: float) -> str:
    """``2027-04-19T02:00:00Z`` for POSIX seconds (rounded to the second)."""
    t = dt.datetime.fromtimestamp(round(float(t_s)), tz=dt.UTC)
    return t.strftime("%Y-%m-%dT%H:%M:%SZ")


def iso_utc_ms(t_s: float) -> str:
    """``2027-04-19T02:00:00.125Z``: POSIX seconds rounded to the millisecond."""
    ms = round(float(t_s) * 1000.0)
    t = dt.datetime.fromtimestamp(ms // 1000, tz=dt.UTC)
    return t.strftime("%Y-%m-%dT%H:%M:%S") + f".{ms % 1000:03d}Z"


def iso_utc_exact(t_s: float) -> str:
    """Whole seconds when the instant is one (to the millisecond), else milliseconds."""
    ms = round(float(t_s) * 1000.0)
    return iso_utc(t_s) if ms % 1000 == 0 else iso_utc_ms(t_s)


def hhmm(t_s: float) -> str:
    """``HH:MM`` UTC."""
    return dt.datetime.fromtimestamp(round(float(t_s)), tz=dt.UTC).strftime("%H:%M")


def hours_label(angle_rad: float) -> str:
    """An angle as ``HH:MM`` of hours (for LST), wrapped to 0-24 h."""
    turn = 2.0 * math.pi
    minutes = int(round((float(angle_rad) % turn) / turn * 24 * 60)) % (24 * 60)
    return f"{minutes // 60:02d}:{minutes % 60:02d}"


def parse_utc(text: object) -> float:
    """POSIX seconds from an ISO 8601 UTC string (a trailing ``Z`` or offset allowed).

    Raises ValueError for anything else, non-strings included."""
    if not isinstance(text, str):
        raise ValueError(f"{text!r} is not an ISO 8601 UTC time")
    stamp = dt.datetime.fromisoformat(text.strip().replace("Z", "+00:00"))
    if stamp.tzinfo is None:
        stamp = stamp.replace(tzinfo=dt.UTC)
    return stamp.timestamp()


def parse_night(text: str, source: str = "--night") -> dt.date:
    """A night's date from ``YYYY-MM-DD``; :class:`InputError` otherwise."""
    try:
        return dt.date.fromisoformat(str(text).strip())
    except ValueError:
        raise InputError(Problem(source, "", f"{text!r} is not a date (YYYY-MM-DD)")) from None


def utc_option(text: str, option: str) -> float:
    """POSIX seconds of a command-line time; :class:`InputError` naming the option."""
    try:
        return parse_utc(text)
    except ValueError:
        raise InputError(Problem(option, "", f"{text!r} is not an ISO 8601 UTC time")) from None
