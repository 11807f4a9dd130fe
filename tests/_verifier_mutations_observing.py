"""Mutations of the verifier's tests, part two: each takes a :class:`Case` and breaks
one rule about calibrators (copies, brackets) or about observing (modes, brightness,
visibility, wind, the conditions given, the set-up of modes).  The rest are in
``tests/_verifier_mutations_plan.py``; the list that names each mutation's rule is in
``tests/test_verifier.py``.

Data are the fictional demo scenario or invented here.
"""

from __future__ import annotations

import copy
import dataclasses
import math

import numpy as np
from _verifier_cases import (
    ARCSEC,
    MAS,
    Case,
    baselines_m,
    change_column,
    change_limits,
    change_mode,
    change_modes,
    mode_of,
    planned_science,
    set_band,
    tracking_mag,
    utc,
)

from scheduler.model.array import Mode
from scheduler.model.conditions import Conditions

# ---------------------------------------------------------------- calibrators and brackets
# Each takes a Case and breaks one rule.  Sources: README.md sections (rules of the
# queue are common practice, no source) or the published formula named.

def calibrator_copied_four_times(c: Case) -> None:
    """README.md, *The night queue*: a calibrator may be observed up to three times."""
    cal = c.doc["visits"][0]
    for n in (3, 4):
        extra = copy.deepcopy(cal)
        extra.update(id=f"{cal['target']}@{n}", number=n)
        c.doc["visits"].append(extra)


def bracket_calibrator_deleted(c: Case) -> None:
    """README.md, *The night queue*: a calibrator starts at most 60 min after each
    science visit ends (CAL-SCI-CAL, common practice).  The calibrators after the last
    science visit are deleted."""
    t = c.targets
    sci = [v for v in c.doc["visits"] if v["kind"] == "science"
           and t.needs_calibrator[t.index(v["target"])]][-1]  # fmt: skip
    c.doc["visits"] = [v for v in c.doc["visits"] if not (
        v["kind"] == "calibrator" and 0.0 <= v["start_s"] - sci["end_s"] <= 3700.0)]


def bracket_no_calibrator_before(c: Case) -> None:
    """README.md, *The night queue*: a calibrator ends at most 60 min before each
    science visit starts (CAL-SCI-CAL, common practice)."""
    sci = c.doc["visits"][c.first_science()]
    c.doc["visits"] = [v for v in c.doc["visits"] if not (
        v["kind"] == "calibrator" and 0.0 <= sci["start_s"] - v["end_s"] <= 3700.0)]


def bracket_calibrators_resolved(c: Case) -> None:
    """README.md, *The night queue* (V = 2 J1(x)/x >= 0.8, x = pi theta B / lambda;
    Abramowitz & Stegun for J1): with 3 mas diameters every calibrator is resolved on
    the medium configuration's longest baseline."""
    cal = ~c.targets.is_science
    diam = np.where(cal, 3.0 * MAS, c.targets.diameter_rad)
    c.targets = dataclasses.replace(c.targets, diameter_rad=diam)


def bracket_calibrators_too_faint(c: Case) -> None:
    """README.md, *The night queue*: within 1.5 mag when both magnitudes are known (in
    the mode's tracking band).  Every science target becomes 4 mag brighter in every
    band (brighter stays within every limit)."""
    t = c.targets
    brighter = [(b, np.where(t.is_science, v - 4.0, v)) for b, v in t.band_mags]
    c.targets = dataclasses.replace(t, mag=np.where(t.is_science, t.mag - 4.0, t.mag),
                                    band_mags=tuple(brighter))  # fmt: skip


# ---------------------------------------------------------------- modes, conditions and measuring
# The helpers (mode_of, tracking_mag, change_mode, ...) are in tests/_verifier_cases.py.


def mode_unknown_name(c: Case) -> None:
    """DOMAIN.md section 8 and README.md, *Inputs*: a visit's mode is one of the array
    file's modes."""
    c.doc["visits"][2]["mode"] = "mid-ir-wide"


def mode_wavelength_changed(c: Case) -> None:
    """DOMAIN.md section 8: the mode fixes the wavelength used for visibilities."""
    c.doc["visits"][4]["wavelength_um"] += 0.55


def mode_bandwidth_changed(c: Case) -> None:
    """DOMAIN.md section 8: the mode fixes the band (its bandwidth)."""
    c.doc["visits"][1]["bandwidth_um"] *= 2.0


def mode_not_stated(c: Case) -> None:
    """README.md, *Outputs*: each planned visit states its mode."""
    del c.doc["visits"][3]["mode"]


def mode_catalog_moves_target(c: Case) -> None:
    """DOMAIN.md section 8 and README.md, *Inputs*: a visit uses its catalog target's
    mode; the catalog moves the first planned science target to a new mode the array
    file gains (its calibrators stay in theirs, so its brackets break too)."""
    i = planned_science(c)
    spare = dataclasses.replace(mode_of(c, i), name="spare-mode")
    c.array = dataclasses.replace(c.array, modes=(*c.array.modes, spare))
    c.targets = dataclasses.replace(c.targets, mode=tuple(
        "spare-mode" if k == i else m for k, m in enumerate(c.targets.mode)))


def mode_catalog_unknown(c: Case) -> None:
    """README.md, *Inputs*: a catalog mode is one of the array file's modes."""
    i = planned_science(c)
    c.targets = dataclasses.replace(c.targets, mode=tuple(
        "far-ir" if k == i else m for k, m in enumerate(c.targets.mode)))


def brightness_tracking_limit_tightened(c: Case) -> None:
    """DOMAIN.md section 8: a target fainter than its mode's fringe-tracking limit cannot
    be observed in that mode; the limit of the first planned science target's mode is
    set 0.5 mag brighter than its magnitude in the tracking band."""
    i = planned_science(c)
    assert not math.isnan(tracking_mag(c, i))
    change_mode(c, mode_of(c, i).name, tracking_limit_mag=tracking_mag(c, i) - 0.5)


def brightness_guiding_band_fainter(c: Case) -> None:
    """DOMAIN.md section 8: nor fainter than its mode's guiding limit; the catalog makes
    the first planned science target 1 mag fainter than that limit in the guiding band
    (its tracking band, which the calibrator rule reads, is another)."""
    i = planned_science(c)
    mode = mode_of(c, i)
    assert mode.guiding_band != mode.tracking_band and math.isfinite(mode.guiding_limit_mag)
    set_band(c, mode.guiding_band, i, mode.guiding_limit_mag + 1.0)


def _tightest_tracking(c: Case) -> tuple[Mode, float]:
    """The planned visit's mode and tracking magnitude nearest its tracking limit."""
    known = [(tracking_mag(c, i) - mode_of(c, i).tracking_limit_mag, mode_of(c, i),
              tracking_mag(c, i))
             for i in (c.targets.index(v["target"]) for v in c.doc["visits"])
             if not math.isnan(tracking_mag(c, i))]  # fmt: skip
    _, mode, mag = max(known, key=lambda row: row[0])
    assert math.isfinite(mode.tracking_limit_mag)
    return mode, mag


def brightness_short_coherence_given(c: Case) -> None:
    """DOMAIN.md section 8 (the limit moves by 2.5 log10(tau0 / tau0_ref), times the
    mode's coefficient): the command line gives a coherence time at which the planned
    target nearest its tracking limit is 0.5 mag too faint; the plan claims the same
    conditions, so only its brightness is wrong."""
    mode, mag = _tightest_tracking(c)
    shift = (mag - 0.5) - mode.tracking_limit_mag  # < 0: a shorter tau0
    tau = mode.reference_coherence_s * 10.0 ** (shift / (2.5 * mode.coherence_coefficient))
    c.conditions = Conditions(coherence_s=tau)
    c.doc["conditions"]["coherence_ms"] = tau * 1e3


def brightness_bad_seeing_given(c: Case) -> None:
    """DOMAIN.md section 8 (guiding worsens with seeing: the limit moves by
    -coefficient x 2.5 log10(seeing / seeing_ref)): seeing of 4 arcsec on the command
    line takes every guiding limit down by 2 x 2.5 log10(5) = 3.5 mag at least, below
    the planned science target's guiding magnitude, set 2.5 mag inside its limit; the
    plan still says reference conditions."""
    i = planned_science(c)
    mode = mode_of(c, i)
    assert mode.reference_seeing_rad <= 0.8 * ARCSEC and mode.seeing_coefficient >= 2.0
    set_band(c, mode.guiding_band, i, mode.guiding_limit_mag - 2.5)
    c.conditions = Conditions(seeing_rad=4.0 * ARCSEC)


def visibility_science_target_resolved(c: Case) -> None:
    """DOMAIN.md section 8 and CHECKS.md, *Visibilities* (the first null of a uniform
    disk at theta = 1.2197 lambda / B): the first planned science target becomes a
    uniform disk twice the null diameter of the shortest projected baseline it can
    have: above 30 deg of altitude a baseline tilted by e from the horizontal keeps at
    least |B| sin(30 deg - e) of its length, so every baseline is past the null."""
    i = planned_science(c)
    b = baselines_m(c.doc)
    length = np.linalg.norm(b, axis=1)
    tilt = np.arcsin(np.abs(b[:, 2]) / length)
    assert c.array.limits.min_altitude_rad >= math.radians(30.0)
    shortest = float(np.min(length * np.sin(math.radians(30.0) - tilt)))
    theta = 2.0 * 1.2197 * mode_of(c, i).wavelength_m / shortest
    change_column(c, "diameter_rad", np.arange(len(c.targets)) == i, theta)
    change_column(c, "limb_darkening", np.arange(len(c.targets)) == i, math.nan)


def wind_everywhere_in_the_plans_conditions(c: Case) -> None:
    """DOMAIN.md section 8: above a wind speed no telescope points within some azimuth
    range of the wind; the plan's own conditions say 20 m/s (the verifier is given none,
    so it takes the plan's), the limit is 15 m/s over 180 deg either side: everywhere."""
    change_limits(c, wind_speed_max_m_s=15.0, wind_halfwidth_rad=math.pi)
    c.doc["conditions"].update(wind_speed_m_s=20.0, wind_from_deg=10.0)


def conditions_better_seeing_given(c: Case) -> None:
    """README.md, *Outputs* (the plan states the conditions it assumed) and DOMAIN.md
    section 8: the command line says 0.6 arcsec of seeing, the plan its modes'
    references (better seeing holds back nothing)."""
    c.conditions = Conditions(seeing_rad=0.6 * ARCSEC)


def conditions_wind_given(c: Case) -> None:
    """README.md, *Outputs*: the plan states the wind it assumed; the command line says
    5 m/s from 90 deg (below any limit of the demo array, so only the statement
    differs)."""
    assert c.array.limits.wind_speed_max_m_s > 5.0
    c.conditions = Conditions(wind_speed_m_s=5.0, wind_from_rad=math.radians(90.0))


def conditions_block_missing(c: Case) -> None:
    """README.md, *Outputs*: a plan checked against given conditions states its own."""
    del c.doc["conditions"]
    c.conditions = Conditions()


def bracket_calibrator_diameters_poorly_known(c: Case) -> None:
    """CHECKS.md, *Visibilities* (theta = 1 mas, B = 100 m, lambda = 1.65 um: x = 0.92308,
    V^2 = 0.804976, sigma(V^2) = 0.0356 for a 10 % diameter error) and DOMAIN.md section
    8 (a calibrator's V^2 error stays around 1-2 %): every calibrator gets the diameter
    with x = 0.92308 on the longest baseline at its mode's wavelength and no diameter
    error of its own (the array's 10 % applies): V = 0.897 passes 0.8, sigma(V^2) = 0.036
    exceeds 0.02 (sigma grows with x up to there)."""
    change_limits(c, calibrator_error_max=0.02, diameter_error_fraction=0.1)
    longest = float(np.max(np.linalg.norm(baselines_m(c.doc), axis=1)))
    cal = ~c.targets.is_science
    theta = np.array([1.0 * MAS * (100.0 / longest) * (mode_of(c, i).wavelength_m / 1.65e-6)
                      for i in range(len(c.targets))])  # fmt: skip
    c.targets = dataclasses.replace(
        c.targets, diameter_rad=np.where(cal, theta, c.targets.diameter_rad),
        diameter_err_rad=np.where(cal, np.nan, c.targets.diameter_err_rad),
        limb_darkening=np.where(cal, np.nan, c.targets.limb_darkening))  # fmt: skip


def bracket_calibrators_in_another_mode(c: Case) -> None:
    """DOMAIN.md section 8: a calibrator calibrates in the science target's mode.  Every
    calibrator moves to a twin of its mode (same wavelength, the visits say so; no mode
    costs set-up time, so no transition changes)."""
    twins = tuple(dataclasses.replace(m, name=f"{m.name}-twin") for m in c.array.modes)
    c.array = dataclasses.replace(c.array, modes=(*c.array.modes, *twins))
    change_modes(c, setup_s=0.0)
    t = c.targets
    c.targets = dataclasses.replace(t, mode=tuple(
        m if t.is_science[i] else f"{mode_of(c, i).name}-twin" for i, m in enumerate(t.mode)))
    for v in c.doc["visits"]:
        if v["kind"] == "calibrator":
            v["mode"] = f"{v['mode']}-twin"


def transition_mode_setup_outgrows_the_gap(c: Case) -> None:
    """DOMAIN.md section 8 (changing mode costs set-up time) and README.md, *The night
    queue*: after a change of mode the slew or carriage move, the acquisition and the
    set-up; the set-up of the mode of the first visit after a change grows to 10 minutes
    more than the gap before it."""
    vs, t = c.doc["visits"], c.targets
    names = [mode_of(c, t.index(v["target"])).name for v in vs]
    k = next((k for k in range(1, len(vs)) if names[k] != names[k - 1]), None)
    assert k is not None, "the demo plan must change mode somewhere"
    change_mode(c, names[k], setup_s=vs[k]["start_s"] - vs[k - 1]["end_s"] + 600.0)


def rules_wavelength_kept(c: Case) -> None:
    """README.md, *Outputs*: the wavelength is each visit's mode's, not a rule."""
    c.doc["rules"]["wavelength_um"] = 1.65



# ---------------------------------------------------------------- campaigns

SIDEREAL_DAY_S = 86164.0905  # the hour angle repeats after one sidereal day (IERS)


def _campaign_block(c: Case, target: str, wanted: int, earlier_mid_s: float) -> None:
    """A campaign block claiming one visit of ``target`` on the night before, in the
    plan's configuration, centred on ``earlier_mid_s``."""
    v = next(x for x in c.doc["visits"] if x["target"] == target)
    half = 0.5 * (v["end_s"] - v["start_s"])
    c.doc["campaign"] = {"name": "test", "source": "", "targets": [{
        "target": target, "visits": {c.doc["configuration"]: wanted}, "ha_spread_h": 1.0,
        "done": [{"night": "2027-04-17", "visit": f"{target}#1",
                  "configuration": c.doc["configuration"],
                  "start_utc": utc(earlier_mid_s - half), "end_utc": utc(earlier_mid_s + half)}],
    }]}  # fmt: skip


def hour_angle_spread_repeats_an_earlier_night(c: Case) -> None:
    """README.md, *Campaigns*: a visit one sidereal day after an earlier one has the same
    hour angle, inside any spread (here 1 h)."""
    v = next(x for x in c.doc["visits"] if x["target"] == "Tide-05")
    _campaign_block(c, "Tide-05", 5, 0.5 * (v["start_s"] + v["end_s"]) - SIDEREAL_DAY_S)


def visits_per_target_beyond_the_campaign(c: Case) -> None:
    """README.md, *Campaigns*: tonight a campaign target has only the visits its campaign
    still wants (1 wanted, 1 done on the night before: none left)."""
    v = next(x for x in c.doc["visits"] if x["target"] == "Tide-05")
    _campaign_block(c, "Tide-05", 1, 0.5 * (v["start_s"] + v["end_s"]) - SIDEREAL_DAY_S
                    - 6 * 3600.0)  # fmt: skip
