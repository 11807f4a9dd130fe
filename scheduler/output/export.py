"""Plan exports for other tools: CSV (one row per visit) and an IVOA VOTable.

The VOTable uses the column names of the IVOA Observation Locator Table Access Protocol
(ObsLocTAP 1.0, table ``ivoa.obsplan``) where they fit, so the queue can feed archive
and coordination services: times as MJD (UTC), positions ICRS in degrees, wavelength in
metres.  opdplan's own columns (visit kind, configuration) follow.  Mapping of
``priority`` onto the protocol's 0/1/2: 2 for a time-critical science visit (hard to
move), 1 for other science, 0 for calibrators (easily replaced).
"""

from __future__ import annotations

import io
from typing import Any

import numpy as np
import pandas as pd

from scheduler.model.times import parse_utc

MJD_UNIX_S = 40587.0  # MJD of 1970-01-01T00:00:00 UTC
ARCSEC_PER_RAD = 180.0 * 3600.0 / np.pi
#: UCDs of the ObsLocTAP columns we fill (ObsLocTAP 1.0, TAP schema table)
UCDS = {
    "target_name": "meta.id;src", "obs_id": "meta.id", "s_ra": "pos.eq.ra",
    "s_dec": "pos.eq.dec", "t_min": "time.start;obs.exposure",
    "t_max": "time.end;obs.exposure", "s_resolution": "pos.angResolution",
    "em_min": "em.wl;stat.min", "em_max": "em.wl;stat.max",
    "t_plan_exptime": "time.duration;obs.exposure",
}  # fmt: skip


def _mjd(iso: str) -> float:
    return parse_utc(iso) / 86400.0 + MJD_UNIX_S


def visits_frame(doc: dict[str, Any]) -> pd.DataFrame:
    """One row per visit with flat columns (carriage paths as ``opd_start_m.<line>``)."""
    rows = []
    for v in doc["visits"]:
        row = {k: v[k] for k in ("id", "target", "kind", "program", "priority", "ra_deg",
                                 "dec_deg", "start_utc", "end_utc", "transition_s", "slew_s",
                                 "carriage_s", "acquisition_s")}  # fmt: skip
        row["alt_min_deg"], row["alt_max_deg"] = v["altitude_deg"]
        for key in ("opd_start_m", "opd_end_m"):
            for line, x in v[key].items():
                row[f"{key}.{line}"] = x
        row["calibrates"] = ";".join(v["calibrates"])
        rows.append(row)
    return pd.DataFrame(rows)


def csv_bytes(doc: dict[str, Any]) -> bytes:
    """The visits as CSV, one row per visit."""
    return visits_frame(doc).to_csv(index=False).encode("utf-8")


def obsplan_table(doc: dict[str, Any], time_critical: set[str]) -> Any:
    """An astropy Table with ObsLocTAP column names, units and UCDs."""
    import astropy.units as u
    from astropy.table import Table

    visits = doc["visits"]
    wavelength = np.array([float(v.get("wavelength_um", 1.65)) for v in visits]) * 1e-6
    band = np.array([float(v.get("bandwidth_um", 0.0)) for v in visits]) * 1e-6
    stations = np.array([[s["east_m"], s["north_m"], s["up_m"]] for s in doc["stations"]])
    longest = float(np.max(np.linalg.norm(stations[:, None] - stations[None], axis=-1)))
    now = _mjd(doc["created_utc"]) if "created_utc" in doc else _mjd(doc["night"]["start_utc"])

    def prio(v):
        if v["kind"] != "science":
            return 0
        return 2 if v["target"] in time_critical else 1

    t = Table()
    t["t_planning"] = np.full(len(visits), now) * u.day
    t["target_name"] = [v["target"] for v in visits]
    t["obs_id"] = [v["id"] for v in visits]
    t["obs_collection"] = [v["program"] or "calibration" for v in visits]
    t["s_ra"] = [v["ra_deg"] for v in visits] * u.deg
    t["s_dec"] = [v["dec_deg"] for v in visits] * u.deg
    t["s_resolution"] = wavelength / longest * ARCSEC_PER_RAD * u.arcsec
    t["t_min"] = [_mjd(v["start_utc"]) for v in visits] * u.day
    t["t_max"] = [_mjd(v["end_utc"]) for v in visits] * u.day
    t["t_plan_exptime"] = [v["end_s"] - v["start_s"] for v in visits] * u.s
    t["em_min"] = (wavelength - band / 2) * u.m
    t["em_max"] = (wavelength + band / 2) * u.m
    t["facility_name"] = [doc["site"]["name"]] * len(visits)
    t["instrument_name"] = [f"configuration {doc['configuration']}, mode {v.get('mode', '')}"
                            for v in visits]  # fmt: skip
    t["category"] = ["fixed" if v["target"] in time_critical else "flexible" for v in visits]
    t["priority"] = np.array([prio(v) for v in visits], dtype=np.int32)
    t["execution_status"] = ["Scheduled"] * len(visits)
    t["visit_kind"] = [v["kind"] for v in visits]
    t.meta["description"] = "opdplan night queue (advisory), ObsLocTAP column names"
    return t


def votable_bytes(doc: dict[str, Any], time_critical: set[str]) -> bytes:
    """The visits as an IVOA VOTable with ObsLocTAP column names, units and UCDs."""
    from astropy.io.votable import from_table

    vot = from_table(obsplan_table(doc, time_critical), table_id="obsplan")
    for field in vot.get_first_table().fields:
        if field.name in UCDS:
            field.ucd = UCDS[field.name]
    buf = io.BytesIO()
    vot.to_xml(buf)
    return buf.getvalue()
