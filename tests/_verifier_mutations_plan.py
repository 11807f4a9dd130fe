"""Mutations of the verifier's tests, part one: each takes a :class:`Case` and breaks
one rule of the plan's document, its inputs or its replan (schema, rules, configuration,
catalog, ids, times, night, Sun, Moon, altitude, horizon, windows, delay, carriages,
transitions, overlaps, visits per target, closures, replans).  The calibrator rules and
the modes are in ``tests/_verifier_mutations_observing.py``; the list that names each
mutation's rule is in ``tests/test_verifier.py``.

Data are the fictional demo scenario or invented here.
"""

from __future__ import annotations

import copy
import dataclasses
import math

import numpy as np
from _verifier_cases import Case, retarget, set_times, shift, utc

import scheduler.astro  # noqa: F401  (astropy offline before moon_too_close's transform)
from scheduler.model.array import Configuration, Limits

# ---------------------------------------------------------------- mutations
# Each takes a Case and breaks one rule.  Sources: README.md sections (rules of the
# queue are common practice, no source) or the published formula named.

def schema_missing_end_utc(c: Case) -> None:
    """README.md, *Outputs*: the plan's schema opdplan-plan/1 requires end_utc."""
    del c.doc["visits"][3]["end_utc"]


def schema_nan_position(c: Case) -> None:
    """README.md, *Outputs*: numbers of the plan are finite (JSON has no NaN)."""
    c.doc["visits"][2]["ra_deg"] = float("nan")


def schema_infinite_path(c: Case) -> None:
    """README.md, *Outputs*: numbers of the plan are finite (JSON has no infinity)."""
    c.doc["visits"][4]["opd_end_m"]["rail-2"] = float("inf")


def schema_wrong_type(c: Case) -> None:
    """README.md, *Outputs*: start_s is a number (schema opdplan-plan/1)."""
    c.doc["visits"][1]["start_s"] = str(c.doc["visits"][1]["start_s"])


def rules_looser_gap(c: Case) -> None:
    """README.md, *The night queue*: calibrator_gap_min is 60; a plan claiming 90 was
    made under other rules."""
    c.doc["rules"]["calibrator_gap_min"] = 90.0


def rules_unknown_key(c: Case) -> None:
    """README.md, *Outputs*: the rules block holds the queue's rules and nothing else."""
    c.doc["rules"]["calibrator_gap_max_min"] = 120.0


def rules_other_settings(c: Case) -> None:
    """README.md, *The night queue*: a calibrator may be observed up to three times; a
    verifier told two must reject the plan's rules block."""
    c.settings = dataclasses.replace(c.settings, calibrator_copies=2)


def configuration_line_range(c: Case) -> None:
    """README.md, *Inputs*: the array file fixes each delay line's range."""
    c.doc["delay_lines"][1]["opd_max_m"] = 150.0


def configuration_station_moved(c: Case) -> None:
    """README.md, *Inputs*: the array file fixes each station's position."""
    c.doc["stations"][2]["east_m"] += 1.0


def configuration_feeds_swapped(c: Case) -> None:
    """README.md, *Inputs*: the configuration says which station feeds which line."""
    a, b = c.doc["delay_lines"][0], c.doc["delay_lines"][1]
    a["station"], b["station"] = b["station"], a["station"]


def configuration_out_line_kept(c: Case) -> None:
    """README.md, *Replanning*: a station that is out removes its line."""
    c.doc["out"] = ["jasper"]


def configuration_site_moved(c: Case) -> None:
    """README.md, *Inputs*: the array file fixes the site's latitude."""
    c.doc["site"]["latitude_deg"] += 0.1


def configuration_unknown_out(c: Case) -> None:
    """README.md, *Replanning*: what is out is a station or delay line of the array."""
    c.doc["out"] = ["cinder"]


def configuration_unknown(c: Case) -> None:
    """README.md, *Inputs*: the configuration is one of the array file's."""
    c.doc["configuration"] = "very-long"


def catalog_position(c: Case) -> None:
    """README.md, *Outputs*: ra_deg/dec_deg are the catalog's ICRS position."""
    c.doc["visits"][4]["ra_deg"] += 0.5


def catalog_unknown_target(c: Case) -> None:
    """README.md, *Inputs*: every visit's target is a catalog row."""
    c.doc["visits"][4]["target"] = "Nowhere-99"


def catalog_program(c: Case) -> None:
    """README.md, *Inputs*: a visit's program is its target's (catalog column program)."""
    c.doc["visits"][1]["program"] = "P-other"


def catalog_priority(c: Case) -> None:
    """README.md, *Inputs*: a visit's priority is its target's (catalog column priority)."""
    c.doc["visits"][1]["priority"] += 1.0


def catalog_unknown_pointing(c: Case) -> None:
    """README.md, *Replanning*: the start state points at a catalog target (or at none)."""
    c.doc["start_state"]["pointing"] = "Nowhere-99"


def catalog_kind(c: Case) -> None:
    """README.md, *Inputs*: a target's kind is the catalog's."""
    c.doc["visits"][0]["kind"] = "science"


def ids_duplicate(c: Case) -> None:
    """README.md, *Replanning*: visit ids name one visit each (the log refers to them)."""
    c.doc["visits"][6]["id"] = c.doc["visits"][1]["id"]


def times_utc_disagrees(c: Case) -> None:
    """README.md, *Outputs*: start_utc/end_utc and start_s/end_s are the same instants."""
    c.doc["visits"][5]["end_utc"] = utc(c.doc["visits"][5]["end_s"] + 2.0)


def times_reversed(c: Case) -> None:
    """README.md, *Outputs*: a visit ends after it starts."""
    v = c.doc["visits"][5]
    set_times(v, v["end_s"], v["start_s"])


def duration_shortened(c: Case) -> None:
    """README.md, *Inputs*: duration_min is the time on target per visit."""
    v = c.doc["visits"][4]
    set_times(v, v["start_s"], v["end_s"] - 300.0)


def night_ends_early(c: Case) -> None:
    """README.md, *A short tour*: the night runs while the Sun is below its limit;
    every visit lies inside it."""
    c.doc["night"]["end_utc"] = utc(c.doc["visits"][-1]["end_s"] - 600.0)


def night_starts_in_daylight(c: Case) -> None:
    """README.md, *A short tour* and DOMAIN.md section 2: the night is when the Sun's
    centre is below sun_altitude_max (here -12 deg)."""
    c.doc["night"]["start_utc"] = utc(c.doc["visits"][0]["start_s"] - 4 * 3600.0)


def night_visit_in_daylight(c: Case) -> None:
    """README.md, *The night queue*: plans keep to the night (the Sun below its limit)."""
    shift(c.doc["visits"][-1], 3 * 3600.0)


def sun_too_close(c: Case) -> None:
    """README.md, *Inputs*, sun_separation_min_deg; DOMAIN.md section 6 (a guard)."""
    c.array = dataclasses.replace(c.array, limits=dataclasses.replace(
        c.array.limits, sun_separation_min_rad=math.radians(115.0)))


def sun_target_in_the_glow(c: Case) -> None:
    """README.md, *Inputs*, sun_separation_min_deg (45): at the start of the night a
    target low in the west (Thistle-03) is 43.5 deg from the Sun."""
    retarget(c, 0, "Thistle-03")


def moon_target_beside_the_moon(c: Case) -> None:
    """README.md, *Inputs*, moon_separation_min_deg (15): Lantern-08 stands about 12 deg
    from the Moon in the small hours."""
    retarget(c, next(k for k, v in enumerate(c.doc["visits"]) if v["target"] == "Tide-05"),
             "Lantern-08")


MOON_MARGIN_DEG = 0.5
"""How far above a visit's actual distance from the Moon ``moon_too_close`` sets the
limit: far above the verifier's tolerance (30 arcsec) and the error of its interpolated
Moon (3 arcsec, tested in ``tests/test_verifier_arithmetic.py``); common practice, no
source."""
MOON_UP_DEG = 1.0
"""How high, by astropy, the Moon must stand at the visit's start for ``moon_too_close``
to use it (the verifier counts the Moon up above 30 arcsec); common practice, no source."""


def moon_too_close(c: Case) -> None:
    """README.md, *Inputs*, moon_separation_min_deg, while the Moon is above the horizon.
    The Moon's distance is found here, not by the verifier, with astropy (the reference,
    CHECKS.md *Reference libraries*): get_body and SkyCoord separation in the unrefracted
    horizontal frame at each planned visit's start (an instant the verifier samples).  Of
    the visits that start with the Moon at least MOON_UP_DEG high, the nearest to it sets
    the limit: its distance, plus MOON_MARGIN_DEG, plus as far as its target's proper
    motion can have carried it since J2000.0 (the catalog's epoch, README.md, *Inputs*;
    the motion is left out of the distance).  So that visit breaks the limit at its start
    whatever the plan; a plan with no visit starting under the Moon fails here rather
    than passing by accident."""
    import astropy.units as u
    from astropy.coordinates import AltAz, EarthLocation, SkyCoord, get_body
    from astropy.time import Time

    site, vs, t = c.array.site, c.doc["visits"], c.targets
    where = EarthLocation.from_geodetic(lon=math.degrees(site.longitude_rad) * u.deg,
                                        lat=math.degrees(site.latitude_rad) * u.deg,
                                        height=site.height_m * u.m)  # fmt: skip
    when = Time([v["start_s"] for v in vs], format="unix", scale="utc")
    frame = AltAz(obstime=when, location=where, pressure=0 * u.hPa)
    moon = get_body("moon", when, location=where).transform_to(frame)
    star = SkyCoord(ra=[v["ra_deg"] for v in vs] * u.deg,
                    dec=[v["dec_deg"] for v in vs] * u.deg).transform_to(frame)  # fmt: skip
    up = moon.alt.deg >= MOON_UP_DEG
    assert up.any(), "the Moon must be up at the start of some planned visit"
    sep = np.where(up, moon.separation(star).deg, np.inf)
    k = int(np.argmin(sep))
    i = t.index(vs[k]["target"])
    pm_deg = math.degrees(math.hypot(t.pm_ra_rad_yr[i], t.pm_dec_rad_yr[i])
                          * abs(float(when[k].jyear) - 2000.0))  # fmt: skip
    limit = math.radians(float(sep[k]) + MOON_MARGIN_DEG + pm_deg)
    c.array = dataclasses.replace(c.array, limits=dataclasses.replace(
        c.array.limits, moon_separation_min_rad=limit))


def altitude_rising_target_too_early(c: Case) -> None:
    """README.md, *Inputs*, min_altitude_deg (30): a target seen rising at 30-32 deg is
    below 30 deg when its visit moves 30 minutes earlier."""
    v = next(v for v in c.doc["visits"] if v["altitude_deg"][0] < 31.0)
    shift(v, -1800.0)


def altitude_above_maximum(c: Case) -> None:
    """README.md, *Inputs*, max_altitude_deg: lowered to 75 deg, the visits near the
    zenith break it."""
    c.array = dataclasses.replace(c.array, limits=Limits(
        **{**dataclasses.asdict(c.array.limits), "max_altitude_rad": math.radians(75.0)}))


def horizon_mask(c: Case) -> None:
    """README.md, *Inputs*, horizon: a mask of 85 deg on a station in use (one point: a
    constant limit) hides every visit."""
    stations = tuple(dataclasses.replace(s, horizon=((0.0, math.radians(85.0)),))
                     if s.name == "quartz" else s for s in c.array.stations)  # fmt: skip
    c.array = dataclasses.replace(c.array, stations=stations)


def horizon_behind_a_dome(c: Case) -> None:
    """README.md, *Inputs*, horizon (linear in azimuth): Tide-02 passes about 40 deg high
    in the south-south-west, where station jasper's mask runs from 46 deg (190 deg
    azimuth) down to 38 deg (230 deg); it is above the 30 deg altitude limit."""
    retarget(c, c.first_science(), "Tide-02")


def time_window_missed(c: Case) -> None:
    """README.md, *Inputs*: window_start_utc/window_end_utc of a time-critical target."""
    t = c.targets
    v = next(v for v in c.doc["visits"] if t.is_time_critical(t.index(v["target"])))
    set_times(v, t.window_start_s[t.index(v["target"])] - 600.0,
              t.window_start_s[t.index(v["target"])] - 600.0 + v["end_s"] - v["start_s"])


def delay_out_of_reach(c: Case) -> None:
    """Thompson, Moran & Swenson section 4.1 and README.md, *Inputs*: with 200 m of fixed
    delay on the reference line no common K reaches every line (x_i = K + p_i.s - a_i -
    f_i)."""
    configs = tuple(Configuration(k.name, k.feeds, (("rail-1", 200.0),)) if k.name == "medium"
                    else k for k in c.array.configurations)  # fmt: skip
    c.array = dataclasses.replace(c.array, configurations=configs)
    c.doc["delay_lines"][0]["fixed_offset_m"] = 200.0


def carriage_outside_range(c: Case) -> None:
    """README.md, *Inputs*: opd_min_m..opd_max_m is a line's optical path range."""
    c.doc["visits"][3]["opd_start_m"]["rail-2"] = 125.0


def carriage_line_missing(c: Case) -> None:
    """README.md, *Outputs*: each visit states every line in use."""
    del c.doc["visits"][3]["opd_end_m"]["rail-3"]


def carriage_path_off_by_5_mm(c: Case) -> None:
    """Thompson, Moran & Swenson section 4.1: the stated paths imply one common K;
    5 mm more on one line breaks it (tolerance 1 mm)."""
    line = c.doc["delay_lines"][1]["name"]
    c.doc["visits"][2]["opd_start_m"][line] += 0.005


def transition_gap_shortened(c: Case) -> None:
    """README.md, *The night queue*: slew or carriage move, then the acquisition (480 s)."""
    k = c.first_science() + 2
    prev, v = c.doc["visits"][k - 1], c.doc["visits"][k]
    shift(v, prev["end_s"] + 100.0 - v["start_s"])


def transition_carriages_far(c: Case) -> None:
    """README.md, *The night queue*: the carriage move, every line at its own rate.  All
    lines start as far as their ranges allow from where they were: K changed, the
    geometry still holds, but the move no longer fits the gap."""
    k = c.first_science() + 1
    prev, v = c.doc["visits"][k - 1], c.doc["visits"][k]
    up, down = 119.0 - max(v["opd_start_m"].values()), 1.0 - min(v["opd_start_m"].values())
    step = up if up > -down else down
    slack = v["start_s"] - prev["end_s"] - 480.0
    assert abs(step) > slack + 10.0, "the mutation must move the carriages far enough"
    v["opd_start_m"] = {ln: x + step for ln, x in v["opd_start_m"].items()}


def transition_first_acquisition(c: Case) -> None:
    """README.md, *The night queue*: nothing starts before the night's first acquisition."""
    c.doc["night"]["start_utc"] = utc(c.doc["visits"][0]["start_s"] - 100.0)


def transition_pointing_unknown(c: Case) -> None:
    """README.md, *Replanning*: half a turn of slew when the pointing is unknown."""
    c.doc["start_state"]["pointing"] = None


def transition_carriages_unknown(c: Case) -> None:
    """README.md, *Replanning*: a carriage with no logged path crosses its whole range."""
    c.doc["start_state"]["opd_m"] = None


def transition_one_line_unknown(c: Case) -> None:
    """README.md, *Replanning*: a line with no logged path crosses its whole range."""
    c.doc["start_state"]["opd_m"]["rail-2"] = None


def overlap_non_neighbours(c: Case) -> None:
    """README.md, *The night queue*: the array observes one visit at a time; the
    overlapping visits are not neighbours in the file."""
    v8, v5 = c.doc["visits"][8], c.doc["visits"][5]
    shift(v8, v5["start_s"] + 120.0 - v8["start_s"])


def overlap_file_order(c: Case) -> None:
    """README.md, *Outputs*: the visits are listed in time order."""
    vs = c.doc["visits"]
    vs[3], vs[4] = vs[4], vs[3]


def visits_repeated(c: Case) -> None:
    """README.md, *Inputs*: visits is the number of visits wanted (1 here)."""
    extra = copy.deepcopy(next(v for v in c.doc["visits"] if v["target"] == "Tide-05"))
    extra.update(id="Tide-05#2", number=2)
    c.doc["visits"].append(extra)


def separation_too_short(c: Case) -> None:
    """README.md, *The night queue*: visits of one target are at least
    min_separation_min apart (here 180 min for two visits)."""
    i = c.targets.index("Tide-05")
    visits, sep = c.targets.visits.copy(), c.targets.min_separation_s.copy()
    visits[i], sep[i] = 2, 180 * 60.0
    c.targets = dataclasses.replace(c.targets, visits=visits, min_separation_s=sep)
    extra = copy.deepcopy(next(v for v in c.doc["visits"] if v["target"] == "Tide-05"))
    extra.update(id="Tide-05#2", number=2)
    shift(extra, 3600.0)
    c.doc["visits"].append(extra)
    c.doc["visits"].sort(key=lambda v: v["start_s"])


def closure_overlapped(c: Case) -> None:
    """README.md, *Replanning*: nothing is planned inside a logged closure."""
    v = c.doc["visits"][2]
    c.doc["closures"].append([utc(v["start_s"] + 60.0), utc(v["start_s"] + 120.0)])


def replan_starts_before_now(c: Case) -> None:
    """README.md, *Replanning*: nothing starts before --now."""
    c.doc["replanned_from"]["now_utc"] = utc(c.doc["visits"][0]["start_s"] + 600.0)


def done_planned_again(c: Case) -> None:
    """README.md, *Replanning*: done visits are not repeated."""
    c.doc["visits"][0]["id"] = c.doc["done"][0]["id"]

