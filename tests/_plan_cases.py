"""Invented test data shared by the planner tests: a small array at an invented site,
catalogs built from tables of strings, and the steps ``plan_night`` takes to turn them
into candidate visits.  Nothing here describes a real site, array or target."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.astro.night import find_night
from scheduler.astro.problem import night_problem
from scheduler.inputs.array_file import parse_array
from scheduler.inputs.catalog import parse_targets
from scheduler.model.conditions import Conditions
from scheduler.model.plan import PlanSettings
from scheduler.output.plan_document import plan_document
from scheduler.queue.prepare import QueueInputs, prepare_queue
from scheduler.verify import verify_plan

NIGHT_DATE = dt.date(2027, 4, 18)
SITE = {"name": "invented test site", "latitude_deg": -26.1, "longitude_deg": -66.2,
        "height_m": 3050.0}  # fmt: skip
LIMITS = {"min_altitude_deg": 30.0, "max_altitude_deg": 87.0, "sun_altitude_max_deg": -12.0,
          "moon_separation_min_deg": 15.0}  # fmt: skip
OVERHEADS = {"acquisition_s": 480.0, "slew_rate_deg_s": 1.5, "settle_s": 5.0}
CONFIG = "test"
COLUMNS = ("name", "ra", "dec", "kind", "program", "priority", "duration_min", "visits",
           "min_visits", "min_separation_min", "needs_calibrator", "mag", "diameter_mas",
           "window_start_utc", "window_end_utc", "mode", "mag_H", "mag_K", "mag_V",
           "diameter_err_mas", "limb_darkening")  # fmt: skip


def array_dict(stations, rates_m_s=None, opd_max_m=120.0, limits=None, modes=None) -> dict:
    """An array document of invented stations ``(east, north, up, internal_path)`` (m),
    one delay line each (0 to ``opd_max_m`` of optical path), one configuration."""
    rates = rates_m_s or [1.0] * len(stations)
    names = [f"pad-{k}" for k in range(len(stations))]
    return {
        "site": dict(SITE),
        "limits": {**LIMITS, **(limits or {})},
        "overheads": dict(OVERHEADS),
        "stations": [{"name": n, "east_m": float(e), "north_m": float(nn), "up_m": float(u),
                      "internal_path_m": float(p)}
                     for n, (e, nn, u, p) in zip(names, stations, strict=True)],
        "delay_lines": [{"name": f"line-{k}", "opd_min_m": 0.0, "opd_max_m": float(opd_max_m),
                         "max_rate_m_s": float(r)} for k, r in enumerate(rates)],
        "configurations": [{"name": CONFIG,
                            "feeds": {f"line-{k}": n for k, n in enumerate(names)}}],
        **({"modes": list(modes)} if modes else {}),
    }  # fmt: skip


def targets_frame(rows: list[dict]) -> pd.DataFrame:
    """A catalog table of strings (the loader's input) from rows of invented targets."""
    unknown = {c for r in rows for c in r} - set(COLUMNS)
    assert not unknown, f"columns not passed to the catalog: {sorted(unknown)}"
    return pd.DataFrame([{c: str(r.get(c, "")) for c in COLUMNS} for r in rows])


class Case:
    """One invented night: array, catalog, night problem, and the queue inputs
    ``plan_night`` would build from them."""

    def __init__(self, array_doc: dict, rows: list[dict], config: str = CONFIG,
                 date: dt.date = NIGHT_DATE, conditions: Conditions | None = None):  # fmt: skip
        self.array = parse_array(array_doc, "<test array>")
        self.targets = parse_targets(targets_frame(rows), "<test targets>")
        night = find_night(self.array, date)
        self.problem = night_problem(self.array, self.array.beams(config), self.targets, night,
                                     conditions=conditions)

    def queue(self, settings: PlanSettings) -> QueueInputs:
        """The queue inputs exactly as ``plan_night`` builds them."""
        return prepare_queue(self.problem, settings)

    def problems(self, plan, settings: PlanSettings) -> list[str]:
        """What the independent verifier finds wrong with ``plan`` (empty: valid)."""
        doc = plan_document(self.problem, self.array, plan, settings)
        return [str(v) for v in verify_plan(doc, self.array, self.targets, settings,
                                            self.problem.conditions)]


def small_instance(seed: int):
    """A small crowded night of invented data, from ``seed``: 2-4 stations within about
    100 m, 2-4 science targets and 1-3 calibrators near them on one patch of sky, a high
    altitude limit so that the windows are a few hours long.  Returns
    ``(array_doc, rows, calibrator_copies)`` with at most 7 candidate visits in mind
    (science visits plus calibrator copies)."""
    rng = np.random.default_rng(seed)
    n_st = int(rng.integers(2, 5))
    stations = [(0.0, 0.0, 0.0, 50.0)] + [
        (rng.uniform(-50, 50), rng.uniform(-50, 50), rng.uniform(-1, 1), rng.uniform(35, 65))
        for _ in range(n_st - 1)
    ]
    n_sci = int(rng.integers(2, 5))
    n_cal = int(rng.integers(1, 4))
    while n_sci + n_cal > 7:
        n_cal -= 1
    copies = 2 if n_sci + 2 * n_cal <= 7 else 1
    centre_ra, centre_dec = rng.uniform(185, 215), rng.uniform(-40, -20)
    rows = []
    for k in range(n_sci):
        rows.append({
            "name": f"S{k + 1}", "ra": f"{centre_ra + rng.uniform(-12, 12):.4f}",
            "dec": f"{centre_dec + rng.uniform(-8, 8):.4f}", "kind": "science",
            "priority": str(int(rng.integers(1, 10))),
            "duration_min": str(int(rng.choice([30, 45, 60, 75, 90]))),
            "needs_calibrator": "true" if rng.random() < 0.7 else "false", "mag": "5.0",
        })  # fmt: skip
    for k in range(n_cal):
        host = rows[int(rng.integers(0, n_sci))]
        rows.append({
            "name": f"C{k + 1}", "ra": f"{float(host['ra']) + rng.uniform(-5, 5):.4f}",
            "dec": f"{float(host['dec']) + rng.uniform(-5, 5):.4f}", "kind": "calibrator",
            "duration_min": str(int(rng.choice([30, 40]))), "mag": "5.5",
        })  # fmt: skip
    limits = {"min_altitude_deg": float(rng.uniform(55, 62))}
    return array_dict(stations, limits=limits), rows, copies
