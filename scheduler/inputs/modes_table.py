"""The ``[[modes]]`` tables of an array file: the beam combiner's observing modes.

```toml
[[modes]]
name = "near-ir-low"
wavelength_um = 1.65          # effective wavelength (required)
bandwidth_um = 0.30
tracking_band = "H"           # band of the fringe tracker's magnitude limit
tracking_limit_mag = 7.5      # at the reference conditions below
guiding_band = "V"            # band of the telescopes' guiding
guiding_limit_mag = 12.0
reference_seeing_arcsec = 0.8
reference_coherence_ms = 4.0
setup_s = 600                 # extra time when the previous visit used another mode
coherence_coefficient = 1.0   # how the limits move with the conditions
seeing_coefficient = 2.0      # (scheduler.model.conditions)
```

Without ``[[modes]]`` an array has one mode at 1.65 um with no magnitude limits.
"""

from __future__ import annotations

import math
from typing import Any

from scheduler.model.array import DEFAULT_MODE, Mode
from scheduler.model.errors import ProblemList

#: key -> (allowed range, factor to SI)
_NUMBERS = {
    "wavelength_um": ((0.1, 30.0), 1e-6), "bandwidth_um": ((0.0, 30.0), 1e-6),
    "tracking_limit_mag": ((-30.0, 40.0), 1.0), "guiding_limit_mag": ((-30.0, 40.0), 1.0),
    "reference_seeing_arcsec": ((0.01, 20.0), math.pi / (180.0 * 3600.0)),
    "reference_coherence_ms": ((0.01, 1000.0), 1e-3), "setup_s": ((0.0, 36000.0), 1.0),
    "coherence_coefficient": ((0.0, 10.0), 1.0), "seeing_coefficient": ((0.0, 10.0), 1.0),
}  # fmt: skip
_FIELD = {"wavelength_um": "wavelength_m", "bandwidth_um": "bandwidth_m",
          "reference_seeing_arcsec": "reference_seeing_rad",
          "reference_coherence_ms": "reference_coherence_s"}  # fmt: skip
_BANDS = ("tracking_band", "guiding_band")
_ALLOWED = {"name", *_NUMBERS, *_BANDS}


def _mode(t: Any, where: str, p: ProblemList) -> Mode | None:
    if not isinstance(t, dict):
        p.add(where, f"must be a table, got {t!r}")
        return None
    for key in sorted(set(t) - _ALLOWED):
        p.add(f"{where}.{key}", f"unknown key (allowed: {sorted(_ALLOWED)})")
    for key in ("name", "wavelength_um"):
        if key not in t:
            p.add(f"{where}.{key}", "missing required key")
    values: dict[str, Any] = {}
    for key, ((lo, hi), factor) in _NUMBERS.items():
        if key not in t:
            continue
        v = t[key]
        if isinstance(v, bool) or not isinstance(v, int | float) or not lo <= v <= hi:
            p.add(f"{where}.{key}", f"must be a number in [{lo}, {hi}], got {v!r}")
            continue
        values[_FIELD.get(key, key)] = float(v) * factor
    for key in (*_BANDS, "name"):
        if key in t and (not isinstance(t[key], str) or not t[key].strip()):
            p.add(f"{where}.{key}", f"must be a non-empty string, got {t[key]!r}")
        elif key in t:
            values[key] = t[key].strip()
    return Mode(**values) if "name" in values and "wavelength_m" in values else None


def read_modes(raw: Any, p: ProblemList) -> tuple[Mode, ...]:
    """The modes of an array file (problems recorded in ``p``)."""
    if raw is None:
        return (DEFAULT_MODE,)
    if not isinstance(raw, list) or not raw:
        p.add("modes", "must be a non-empty array of tables ([[modes]])")
        return (DEFAULT_MODE,)
    modes = [_mode(t, f"modes[{i}]", p) for i, t in enumerate(raw)]
    names = [t.get("name") if isinstance(t, dict) else None for t in raw]
    for i, name in enumerate(names):
        if isinstance(name, str) and name.strip() and name in names[:i]:
            p.add(f"modes[{i}].name", f"duplicate name {name!r}")
    good = tuple(m for m in modes if m is not None)
    return good or (DEFAULT_MODE,)
