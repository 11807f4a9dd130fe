"""Observing modes, brightness and the night's conditions (DOMAIN.md section 8; README.md,
*Inputs*; common practice, no source):

- ``mode``: a visit's ``mode`` is its catalog target's (an empty catalog mode stands for
  the array file's first mode), it is a mode of the array file, and the visit's
  ``wavelength_um`` and ``bandwidth_um`` are that mode's.  Planned visits must state all
  three; done visits (copied from an earlier plan) are judged on what they state.
- ``brightness``: a planned visit's target is not fainter than its mode's limits under
  the conditions.  The fringe tracker's limit moves with the coherence time,
  ``L_t + c_t 2.5 log10(tau0 / tau0_ref)``, the guiding limit with the seeing,
  ``L_g - c_s 2.5 log10(seeing / seeing_ref)`` (each condition not given: the mode's
  reference; a :class:`Conditions` factor multiplies it).  A band's magnitude is the
  catalog's ``mag_<band>``, else, for the mode's tracking band, the plain ``mag``; an
  unknown magnitude is not judged.
- ``conditions``: when the verifier is given conditions (the command line's
  ``--seeing``, ``--coherence-ms``, ``--wind-speed``, ``--wind-from``; any not given is
  the mode's reference or no wind), the plan's ``conditions`` block states the same.

The arithmetic is written here again; nothing of the planner's brightness code is used.
"""

from __future__ import annotations

import math
from typing import Any

from scheduler.model.array import ArrayModel, Mode
from scheduler.model.conditions import Conditions
from scheduler.model.targets import Targets
from scheduler.verify.document import Entry
from scheduler.verify.report import Violation
from scheduler.verify.tolerances import ARCSEC_RAD, CONDITIONS_TOL, MAG_TOL, MODE_TOL_UM


def catalog_mode(array: ArrayModel, targets: Targets, i: int) -> Mode | None:
    """The mode of catalog target ``i`` (empty: the array's first); None when the array
    has no mode of that name."""
    name = targets.mode[i]
    if not name:
        return array.modes[0]
    return next((m for m in array.modes if m.name == name), None)


def mode_named(array: ArrayModel, targets: Targets, target: str) -> Mode | None:
    """The catalog mode of the target called ``target`` (None: not in the catalog, or
    its mode is not the array's)."""
    if target not in targets.names:
        return None
    return catalog_mode(array, targets, targets.index(target))


def setup_s(array: ArrayModel, targets: Targets, before: str | None, target: str) -> float:
    """Set-up seconds before a visit of ``target`` after one of ``before``: the set-up
    of ``target``'s mode when ``before``'s is another.  ``before`` None (or not in the
    catalog): the telescopes' target is unknown, and the set-up is charged when the
    array has more than one mode.  A catalog mode the array lacks (rule ``mode``) is
    charged nothing."""
    mode = mode_named(array, targets, target)
    if mode is None:
        return 0.0
    if before is None or before not in targets.names:
        return mode.setup_s if len(array.modes) > 1 else 0.0
    previous = mode_named(array, targets, before)
    return 0.0 if previous is None or previous.name == mode.name else mode.setup_s


# ---------------------------------------------------------------- rule ``mode``


def _stated(v: Entry, mode: Mode, strict: bool) -> list[str]:
    found = []
    if v.mode is None:
        found += [f"states no mode; its target's is {mode.name!r}"] if strict else []
    elif v.mode != mode.name:
        found.append(f"mode {v.mode!r}, but its target {v.target}'s is {mode.name!r}")
    for key, stated, want_m in (("wavelength_um", v.wavelength_um, mode.wavelength_m),
                                ("bandwidth_um", v.bandwidth_um, mode.bandwidth_m)):  # fmt: skip
        want = want_m * 1e6
        if stated is None:
            found += [f"states no {key}; mode {mode.name!r} has {want:g}"] if strict else []
        elif abs(stated - want) > MODE_TOL_UM:
            found.append(f"{key} {stated:g}, but mode {mode.name!r} has {want:g}")
    return found


def mode_violations(visits: tuple[Entry, ...], done: tuple[Entry, ...], array: ArrayModel,
                    targets: Targets) -> list[Violation]:  # fmt: skip
    """Visits whose mode, wavelength or bandwidth is not their catalog target's mode's,
    and catalog or stated modes that the array file does not have."""
    names = [m.name for m in array.modes]
    found = []
    for flag, group in ((False, visits), (True, done)):
        for v in group:
            where = f"done {v.id}" if flag else v.id
            if v.mode is not None and v.mode not in names:
                found.append(Violation("mode", where, f"mode {v.mode!r} is not a mode of the "
                                       f"array file (it has {names})"))  # fmt: skip
            if v.target not in targets.names:
                continue
            mode = mode_named(array, targets, v.target)
            if mode is None:
                wanted = targets.mode[targets.index(v.target)]
                found.append(Violation("mode", where, f"{v.target}'s catalog mode {wanted!r} is "
                                       f"not a mode of the array file (it has {names})"))
                continue
            found += [Violation("mode", where, text) for text in _stated(v, mode, not flag)]
    return found


# ---------------------------------------------------------------- rule ``brightness``


def band_magnitude(targets: Targets, i: int, band: str, mode: Mode) -> float:
    """Target ``i``'s magnitude in ``band`` (``mag_<band>``, else the plain ``mag`` for
    the mode's tracking band); NaN when unknown."""
    value = float(targets.magnitude(band)[i])
    if math.isnan(value) and band == mode.tracking_band:
        value = float(targets.mag[i])
    return value


def coherence_s(mode: Mode, c: Conditions) -> float:
    base = mode.reference_coherence_s if c.coherence_s is None else c.coherence_s
    return base * c.coherence_factor


def seeing_rad(mode: Mode, c: Conditions) -> float:
    base = mode.reference_seeing_rad if c.seeing_rad is None else c.seeing_rad
    return base * c.seeing_factor


def brightness_limits(mode: Mode, c: Conditions) -> tuple[float, float]:
    """(fringe tracking, guiding) limiting magnitudes of ``mode`` under ``c``."""
    track = mode.tracking_limit_mag + mode.coherence_coefficient * 2.5 * math.log10(
        coherence_s(mode, c) / mode.reference_coherence_s)
    guide = mode.guiding_limit_mag - mode.seeing_coefficient * 2.5 * math.log10(
        seeing_rad(mode, c) / mode.reference_seeing_rad)
    return track, guide


def _faint(v: Entry, array: ArrayModel, targets: Targets, c: Conditions) -> list[Violation]:
    i = targets.index(v.target)
    mode = catalog_mode(array, targets, i)
    if mode is None:
        return []
    track, guide = brightness_limits(mode, c)
    found = []
    for what, band, limit, condition in (
            ("fringe tracking", mode.tracking_band, track,
             f"coherence time {coherence_s(mode, c) * 1e3:.2f} ms"),
            ("guiding", mode.guiding_band, guide,
             f"seeing {seeing_rad(mode, c) / ARCSEC_RAD:.2f} arcsec")):  # fmt: skip
        m = band_magnitude(targets, i, band, mode)
        if not math.isnan(m) and m > limit + MAG_TOL:
            found.append(Violation("brightness", v.id, f"{v.target} is {band} = {m:.2f} mag, "
                                   f"fainter than the {what} limit {limit:.2f} mag of mode "
                                   f"{mode.name!r} at {condition}"))  # fmt: skip
    return found


def brightness_violations(visits: tuple[Entry, ...], array: ArrayModel, targets: Targets,
                          c: Conditions) -> list[Violation]:  # fmt: skip
    """Planned visits whose target is too faint for its mode under ``c``."""
    return [p for v in visits if v.target in targets.names
            for p in _faint(v, array, targets, c)]  # fmt: skip


# ---------------------------------------------------------------- rule ``conditions``


def _number(value: Any) -> float | None:
    return None if value is None else float(value)


def stated_conditions(doc: dict[str, Any]) -> Conditions:
    """The conditions the plan's ``conditions`` block states (no block: each mode's
    reference, no wind)."""
    block = doc.get("conditions") or {}
    seeing, tau = _number(block.get("seeing_arcsec")), _number(block.get("coherence_ms"))
    wind_from = _number(block.get("wind_from_deg"))
    return Conditions(
        seeing_rad=None if seeing is None else seeing * ARCSEC_RAD,
        coherence_s=None if tau is None else tau * 1e-3,
        wind_speed_m_s=_number(block.get("wind_speed_m_s")) or 0.0,
        wind_from_rad=None if wind_from is None else math.radians(wind_from),
    )  # fmt: skip


def block_of(c: Conditions) -> dict[str, float | None]:
    """``c`` in the units of a plan's ``conditions`` block (factors applied)."""
    return {
        "seeing_arcsec": None if c.seeing_rad is None else c.seeing_rad * c.seeing_factor
        / ARCSEC_RAD,
        "coherence_ms": None if c.coherence_s is None else c.coherence_s * c.coherence_factor
        * 1e3,
        "wind_speed_m_s": c.wind_speed_m_s,
        "wind_from_deg": None if c.wind_from_rad is None else math.degrees(c.wind_from_rad),
    }  # fmt: skip


def _differ(key: str, got: float | None, want: float | None) -> bool:
    if got is None or want is None:
        return (got is None) != (want is None)
    step = got - want
    if key == "wind_from_deg":
        step = (step + 180.0) % 360.0 - 180.0
    return abs(step) > CONDITIONS_TOL


def _show(value: float | None) -> str:
    return "null" if value is None else f"{value:g}"


def conditions_violations(doc: dict[str, Any], given: Conditions) -> list[Violation]:
    """Where the plan's ``conditions`` block differs from the conditions ``given``."""
    if "conditions" not in doc:
        return [Violation("conditions", "conditions", "missing, but conditions were given")]
    block = doc["conditions"]
    found = []
    for key, want in block_of(given).items():
        got = _number(block.get(key))
        if _differ(key, got, want):
            found.append(Violation("conditions", f"conditions.{key}", f"the plan says "
                                   f"{_show(got)}, the conditions given {_show(want)}"))
    return found
