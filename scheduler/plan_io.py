"""Plan files: the ``opdplan-plan/1`` JSON document, written atomically.

The document carries everything the verifier needs besides the array file and the
catalog: the night, the configuration, the stations and delay lines in use, and each
visit's times, transition and carriage paths.
"""

from __future__ import annotations

import hashlib
import json
import os
import tempfile
import time
from pathlib import Path

import numpy as np

from scheduler.constraints import SkyContext
from scheduler.errors import InputError, Problem
from scheduler.plan_model import Plan, PlanSettings
from scheduler.timefmt import iso_utc

SCHEMA = "opdplan-plan/1"


def plan_dict(ctx: SkyContext, array, plan: Plan, settings: PlanSettings) -> dict:
    t, b = ctx.targets, ctx.beams
    rules = {
        "calibrator_gap_min": settings.calibrator_gap_s / 60.0,
        "calibrator_max_sep_deg": float(np.degrees(settings.calibrator_max_sep_rad)),
        "calibrator_max_dmag": settings.calibrator_max_dmag,
        "calibrator_min_visibility": settings.calibrator_min_visibility,
        "wavelength_um": settings.wavelength_m * 1e6,
        "carriage_weight": settings.carriage_weight,
    }
    night = ctx.night
    return {
        "schema": SCHEMA,
        "created_utc": iso_utc(time.time()),
        "advisory": "Advisory only: every motion follows the site's interlocks and procedures.",
        "night": {"date": night.date.isoformat(), "start_utc": iso_utc(night.start_s),
                  "end_utc": iso_utc(night.end_s)},
        "site": {"name": array.site.name,
                 "latitude_deg": float(np.degrees(array.site.latitude_rad)),
                 "longitude_deg": float(np.degrees(array.site.longitude_rad)),
                 "height_m": array.site.height_m},
        "configuration": b.configuration,
        "stations": [
            {"name": st.name, "east_m": st.east_m, "north_m": st.north_m, "up_m": st.up_m,
             "internal_path_m": st.internal_path_m}
            for st in (array.station(n) for n in b.station_names)
        ],
        "delay_lines": [
            {"name": ln, "station": b.station_names[i], "opd_min_m": float(b.opd_min_m[i]),
             "opd_max_m": float(b.opd_max_m[i]), "max_rate_m_s": float(b.rate_m_s[i]),
             "fixed_offset_m": float(b.fixed_offset_m[i])}
            for i, ln in enumerate(b.line_names)
        ],
        "visits": [
            {"id": v.id, "target": t.names[v.target], "kind": t.kind(v.target),
             "program": t.program[v.target], "priority": float(t.priority[v.target]),
             "ra_deg": float(np.degrees(t.ra_rad[v.target])),
             "dec_deg": float(np.degrees(t.dec_rad[v.target])),
             "start_utc": iso_utc(v.start_s), "end_utc": iso_utc(v.end_s),
             "start_s": v.start_s, "end_s": v.end_s,
             "transition_s": round(v.transition_s, 3), "slew_s": round(v.slew_s, 3),
             "carriage_s": round(v.carriage_s, 3), "acquisition_s": v.acquisition_s,
             "altitude_deg": [round(float(np.degrees(a)), 3) for a in v.alt_range_rad],
             "opd_start_m": _paths(b.line_names, v.opd_start_m),
             "opd_end_m": _paths(b.line_names, v.opd_end_m),
             "calibrates": list(v.calibrates)}
            for v in plan.visits
        ],
        "unscheduled": [{"target": n, "reason": r} for n, r in plan.unscheduled],
        "rules": rules,
        "inputs": {"array": _input(array.source), "targets": _input(t.source)},
        "summary": plan.summary,
    }  # fmt: skip


def file_sha256(path: str | Path) -> str | None:
    try:
        return hashlib.sha256(Path(path).read_bytes()).hexdigest()
    except OSError:
        return None


def _input(source: str) -> dict:
    """Where an input came from, so a replan can find it again, and its checksum."""
    path = Path(source)
    if not path.exists():
        return {"path": source, "sha256": None}
    return {"path": str(path.resolve()), "sha256": file_sha256(path)}


def read_plan(path: str | Path) -> dict:
    """A plan document; one-line errors for a missing file, bad JSON or another schema."""
    src = str(path)
    try:
        doc = json.loads(Path(path).read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(Problem(src, "", "file not found")) from None
    except (json.JSONDecodeError, UnicodeDecodeError) as exc:
        raise InputError(Problem(src, "", f"not valid JSON: {exc}")) from None
    if not isinstance(doc, dict) or doc.get("schema") != SCHEMA:
        got = doc.get("schema") if isinstance(doc, dict) else None
        raise InputError(Problem(src, "schema", f"expected {SCHEMA!r}, got {got!r}"))
    return doc


def _paths(lines, values) -> dict[str, float]:
    return {ln: round(x, 6) for ln, x in zip(lines, values, strict=True)}


def write_atomic(path: str | Path, text: str) -> None:
    """Write ``text`` to ``path`` through a temporary file in the same folder, then
    rename: readers see the old file or the new one, never half of one."""
    write_atomic_bytes(path, text.encode("utf-8"))


def write_atomic_bytes(path: str | Path, data: bytes) -> None:
    """Bytes version of :func:`write_atomic`."""
    path = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", dir=path.parent or ".")
    try:
        with os.fdopen(fd, "wb") as f:
            f.write(data)
            f.flush()
            os.fsync(f.fileno())
        mask = os.umask(0)
        os.umask(mask)
        os.chmod(tmp, 0o666 & ~mask)  # a new file's usual mode, not mkstemp's 0600
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def write_plan(path, doc: dict) -> None:
    write_atomic(path, json.dumps(doc, indent=2) + "\n")
