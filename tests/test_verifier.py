"""The independent verifier (``scheduler.verify``).

- a plan opdplan makes, and a replan-shaped document built from it, pass;
- mutation tests: each breaks one rule of a copy of a valid plan (or tightens one input
  under it) and the verifier must name THAT rule; each mutation's docstring names the
  source of its rule (README.md, or a published formula);
- the verifier's own arithmetic (directions, delay, horizon masks, angular distances,
  uniform-disk visibility, slews) against hand-computed values and CHECKS.md;
- its interpolated Sun and Moon against astropy's direct transform.

Data are the fictional demo scenario or invented here.
"""

from __future__ import annotations

import copy
import dataclasses
import datetime as dt
import math
from collections.abc import Callable
from typing import Any

import numpy as np
import pytest

from scheduler.astro.reference import body_altaz
from scheduler.model.array import ArrayModel, Configuration, Limits, Overheads
from scheduler.model.plan import PlanSettings
from scheduler.model.targets import Targets
from scheduler.verify import RULES, Violation, verify_plan
from scheduler.verify.geometry import (
    altaz_from_enu,
    angle_between,
    angular_distance,
    azimuth_step,
    disk_visibility,
    enu_from_altaz,
    enu_from_hadec,
    implied_k,
    k_span,
    mask_altitude,
    move_s,
    projected_paths,
    uniform_disk,
)
from scheduler.verify.sequence import slew_s
from scheduler.verify.sky import body_enu

ARCSEC = math.radians(1.0 / 3600.0)
MAS = ARCSEC / 1000.0
Doc = dict[str, Any]


# ---------------------------------------------------------------- building documents


def utc(t_s: float) -> str:
    """ISO 8601 UTC with milliseconds, written here (not with opdplan's formatter)."""
    ms = round(t_s * 1000.0)
    stamp = dt.datetime.fromtimestamp(ms // 1000, tz=dt.UTC).strftime("%Y-%m-%dT%H:%M:%S")
    return f"{stamp}.{ms % 1000:03d}Z"


def set_times(v: Doc, start_s: float, end_s: float) -> None:
    v.update(start_s=round(start_s, 3), end_s=round(end_s, 3), start_utc=utc(start_s),
             end_utc=utc(end_s))  # fmt: skip


def shift(v: Doc, dt_s: float) -> None:
    set_times(v, v["start_s"] + dt_s, v["end_s"] + dt_s)


def retarget(c: Case, k: int, name: str) -> None:
    """Visit ``k`` observes catalog target ``name`` instead (catalog fields and length
    follow; times start where they did; paths and neighbours are left as they were)."""
    t, v = c.targets, c.doc["visits"][k]
    i = t.index(name)
    v.update(target=name, kind=str(t.kind(i)), program=t.program[i],
             priority=float(t.priority[i]), ra_deg=math.degrees(t.ra_rad[i]),
             dec_deg=math.degrees(t.dec_rad[i]))  # fmt: skip
    set_times(v, v["start_s"], v["start_s"] + float(t.duration_s[i]))


def drop_station(doc: Doc, station: str) -> None:
    """The document as a replan with ``station`` out writes it: its line is gone from
    the lines in use, the planned visits' paths and the start state."""
    gone = [d["name"] for d in doc["delay_lines"] if d["station"] == station]
    doc["stations"] = [s for s in doc["stations"] if s["name"] != station]
    doc["delay_lines"] = [d for d in doc["delay_lines"] if d["station"] != station]
    for v in doc["visits"]:
        for key in ("opd_start_m", "opd_end_m"):
            v[key] = {ln: x for ln, x in v[key].items() if ln not in gone}
    opd = doc["start_state"]["opd_m"]
    doc["start_state"]["opd_m"] = {ln: x for ln, x in opd.items() if ln not in gone}


def make_replan(plan: Doc, out: tuple[str, ...] = ()) -> Doc:
    """A replan-shaped document built by hand from a plan: its first three visits done
    at their planned times, now = the end of the third, the telescopes pointing at its
    target and the carriages where it left them, one closure in the past and one after
    the last visit, and ``out`` (stations) removed."""
    doc = copy.deepcopy(plan)
    done, planned = doc["visits"][:3], doc["visits"][3:]
    last = done[-1]
    doc.update(visits=planned, done=done, out=list(out), diff={},
               replanned_from={"plan": "/invented/tonight.json", "now_utc": utc(last["end_s"])},
               closures=[[utc(done[0]["end_s"] + 60.0), utc(done[0]["end_s"] + 120.0)],
                         [utc(planned[-1]["end_s"] + 120.0), utc(planned[-1]["end_s"] + 600.0)]],
               start_state={"utc": utc(last["end_s"]), "pointing": last["target"],
                            "opd_m": dict(last["opd_end_m"])})  # fmt: skip
    for station in out:
        drop_station(doc, station)
    return doc


@dataclasses.dataclass
class Case:
    """A plan document and the inputs it is checked against (each may be mutated)."""

    doc: Doc
    array: ArrayModel
    targets: Targets
    settings: PlanSettings

    def run(self) -> list[Violation]:
        return verify_plan(self.doc, self.array, self.targets, self.settings)

    def first_science(self) -> int:
        """Index of the first planned science visit that needs calibrators."""
        t = self.targets
        return next(k for k, v in enumerate(self.doc["visits"]) if v["kind"] == "science"
                    and t.needs_calibrator[t.index(v["target"])])  # fmt: skip


@pytest.fixture(scope="module")
def demo(demo_greedy: Any) -> tuple[Doc, ArrayModel, Targets]:
    inputs, _, _, doc = demo_greedy
    return copy.deepcopy(doc), inputs.array, inputs.targets


@pytest.fixture
def plan_case(demo: tuple[Doc, ArrayModel, Targets]) -> Case:
    doc, array, targets = demo
    return Case(copy.deepcopy(doc), array, targets, PlanSettings())


@pytest.fixture
def replan_case(demo: tuple[Doc, ArrayModel, Targets]) -> Case:
    doc, array, targets = demo
    return Case(make_replan(doc), array, targets, PlanSettings())


# ---------------------------------------------------------------- valid documents pass


def test_greedy_demo_plan_passes(plan_case: Case) -> None:
    """A plan the planner made holds every rule (README.md, *The night queue*)."""
    assert len(plan_case.doc["visits"]) >= 6
    assert plan_case.run() == []


@pytest.mark.parametrize("out", [(), ("jasper",)])
def test_replan_shaped_document_passes(demo: tuple[Doc, ArrayModel, Targets],
                                       out: tuple[str, ...]) -> None:  # fmt: skip
    """README.md, *Replanning during the night*: done visits, closures, the start state
    and a station out, consistent with the plan they come from, break no rule."""
    doc, array, targets = demo
    replan = make_replan(doc, out)
    assert replan["done"] and replan["visits"] and replan["closures"]
    assert verify_plan(replan, array, targets, PlanSettings()) == []


def test_violation_reads_as_one_line() -> None:
    """The command line prints each violation on one line: ``where: [rule] message``
    (the verifier's public form; common practice, no source)."""
    v = Violation("overlap", "Tide-05#1", "overlaps Cal-Elm-02@1")
    assert str(v) == "Tide-05#1: [overlap] overlaps Cal-Elm-02@1"
    with pytest.raises(dataclasses.FrozenInstanceError):
        v.rule = "ids"  # type: ignore[misc]


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


def moon_too_close(c: Case) -> None:
    """README.md, *Inputs*, moon_separation_min_deg, while the Moon is above the horizon."""
    c.array = dataclasses.replace(c.array, limits=dataclasses.replace(
        c.array.limits, moon_separation_min_rad=math.radians(45.0)))


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
    """README.md, *The night queue*: within 1.5 mag when both magnitudes are known."""
    mag = np.where(~c.targets.is_science, c.targets.mag + 4.0, c.targets.mag)
    c.targets = dataclasses.replace(c.targets, mag=mag)


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


@dataclasses.dataclass(frozen=True)
class Mutation:
    rule: str
    change: Callable[[Case], None]
    base: str = "plan"  # or "replan"
    only: bool = False  # the rule is the only one broken


MUTATIONS = [
    Mutation("schema", schema_missing_end_utc, only=True),
    Mutation("schema", schema_nan_position, only=True),
    Mutation("schema", schema_infinite_path, only=True),
    Mutation("schema", schema_wrong_type, only=True),
    Mutation("rules", rules_looser_gap, only=True),
    Mutation("rules", rules_other_settings, only=True),
    Mutation("rules", rules_unknown_key, only=True),
    Mutation("configuration", configuration_line_range, only=True),
    Mutation("configuration", configuration_station_moved, only=True),
    Mutation("configuration", configuration_feeds_swapped, only=True),
    Mutation("configuration", configuration_out_line_kept, "replan"),
    Mutation("configuration", configuration_unknown, only=True),
    Mutation("configuration", configuration_site_moved, only=True),
    Mutation("configuration", configuration_unknown_out, "replan", only=True),
    Mutation("catalog", catalog_position, only=True),
    Mutation("catalog", catalog_unknown_target),
    Mutation("catalog", catalog_kind, only=True),
    Mutation("catalog", catalog_program, only=True),
    Mutation("catalog", catalog_priority, only=True),
    Mutation("catalog", catalog_unknown_pointing, "replan"),
    Mutation("ids", ids_duplicate, only=True),
    Mutation("times", times_utc_disagrees, only=True),
    Mutation("times", times_reversed),
    Mutation("duration", duration_shortened),
    Mutation("night", night_ends_early, only=True),
    Mutation("night", night_starts_in_daylight, only=True),
    Mutation("night", night_visit_in_daylight),
    Mutation("sun", sun_too_close, only=True),
    Mutation("sun", sun_target_in_the_glow),
    Mutation("moon", moon_too_close, only=True),
    Mutation("moon", moon_target_beside_the_moon),
    Mutation("altitude", altitude_rising_target_too_early),
    Mutation("altitude", altitude_above_maximum, only=True),
    Mutation("horizon", horizon_mask, only=True),
    Mutation("horizon", horizon_behind_a_dome),
    Mutation("time_window", time_window_missed),
    Mutation("delay", delay_out_of_reach),
    Mutation("carriage_range", carriage_outside_range),
    Mutation("carriage_range", carriage_line_missing, only=True),
    Mutation("carriage_geometry", carriage_path_off_by_5_mm, only=True),
    Mutation("transition", transition_gap_shortened),
    Mutation("transition", transition_carriages_far, only=True),
    Mutation("transition", transition_first_acquisition, only=True),
    Mutation("transition", transition_pointing_unknown, "replan", only=True),
    Mutation("transition", transition_carriages_unknown, "replan", only=True),
    Mutation("transition", transition_one_line_unknown, "replan", only=True),
    Mutation("overlap", overlap_non_neighbours),
    Mutation("overlap", overlap_file_order, only=True),
    Mutation("visits_per_target", visits_repeated),
    Mutation("separation", separation_too_short),
    Mutation("calibrator_copies", calibrator_copied_four_times),
    Mutation("bracket", bracket_calibrator_deleted, only=True),
    Mutation("bracket", bracket_no_calibrator_before, only=True),
    Mutation("bracket", bracket_calibrators_resolved, only=True),
    Mutation("bracket", bracket_calibrators_too_faint, only=True),
    Mutation("closure", closure_overlapped, "replan", only=True),
    Mutation("replan_start", replan_starts_before_now, "replan", only=True),
    Mutation("done", done_planned_again, "replan"),
    Mutation("ids", done_planned_again, "replan"),
]


@pytest.mark.parametrize("m", MUTATIONS, ids=[f"{m.rule}:{m.change.__name__}" for m in MUTATIONS])
def test_mutation_is_caught(m: Mutation, plan_case: Case, replan_case: Case) -> None:
    """A copy of a valid plan, broken in one way, must be rejected under THAT rule (and,
    where the change touches nothing else, under that rule alone).  Each mutation's
    docstring names the source of the rule it breaks."""
    case = replan_case if m.base == "replan" else plan_case
    m.change(case)
    found = case.run()
    rules = {p.rule for p in found}
    assert m.rule in rules, found
    if m.only:
        assert rules == {m.rule}, found


def test_every_rule_has_a_mutation() -> None:
    """Every rule the verifier names (report.RULES) is broken by at least one mutation,
    and every mutation names its source (README.md or the published formula)."""
    assert {m.rule for m in MUTATIONS} == set(RULES)
    for m in MUTATIONS:
        assert m.change.__doc__ and ("README.md" in m.change.__doc__
                                     or "Thompson" in m.change.__doc__), m.change.__name__


def test_schema_problem_names_the_field(plan_case: Case) -> None:
    """README.md, *Outputs*: a NaN in ra_deg is reported at its field, and nothing else
    is checked."""
    plan_case.doc["visits"][2]["ra_deg"] = float("nan")
    plan_case.doc["visits"][5]["opd_start_m"]["rail-1"] += 1.0  # ignored: schema first
    want = Violation("schema", "visits[2].ra_deg", "nan is not a finite number")
    assert plan_case.run() == [want]


def test_visit_number_below_one() -> None:
    """README.md, *Outputs*: visit numbers count from 1 (the schema says so too; the
    rule is checked on its own here, behind the schema's back)."""
    from scheduler.verify.document import Entry
    from scheduler.verify.entries import id_violations

    entry = Entry("Tide-05#0", "Tide-05", "science", 0, "P-tide", 9.0, 163.9204, -56.8109,
                  0.0, 1200.0, 0.0, 1200.0, {}, {})  # fmt: skip
    assert [p.rule for p in id_violations((entry,), ())] == ["ids"]


def test_overlap_is_found_whatever_the_file_order(plan_case: Case) -> None:
    """README.md, *The night queue*: one visit at a time, every pair checked."""
    vs = plan_case.doc["visits"]
    shift(vs[12], vs[3]["start_s"] + 60.0 - vs[12]["start_s"])
    found = [p for p in plan_case.run() if p.rule == "overlap"]
    assert any(vs[12]["id"] in p.where + p.message and vs[3]["id"] in p.where + p.message
               for p in found), found  # fmt: skip


def test_moon_counts_only_while_it_is_up(plan_case: Case) -> None:
    """README.md, *Inputs*: moon_separation_min applies while the Moon is above the
    horizon.  With a limit of 179 deg every visit is near the Moon; the last visit of
    the demo night, after moonset (the Moon sets before it starts), is not reported."""
    plan_case.array = dataclasses.replace(plan_case.array, limits=dataclasses.replace(
        plan_case.array.limits, moon_separation_min_rad=math.radians(179.0)))
    found = {p.where for p in plan_case.run() if p.rule == "moon"}
    ids = [v["id"] for v in plan_case.doc["visits"]]
    assert set(ids[:5]) <= found
    assert ids[-1] not in found


# ---------------------------------------------------------------- the verifier's own arithmetic

# CHECKS.md, "Interferometer geometry" (Thompson, Moran & Swenson section 4.1; formulas
# secondary, numbers computed outside the project): ENU baseline, latitude, hour angle,
# declination -> w (= b.s, metres), source elevation and azimuth (north through east).
TMS_TABLE = [
    ((100.0, 0.0, 0.0), -24.6, 2.0, -30.0, -43.3013, 62.8817, 251.7952),
    ((100.0, 0.0, 0.0), -24.6, 0.0, -30.0, 0.0, 84.6000, 180.0),
    ((100.0, 0.0, 0.0), -24.6, -3.0, -60.0, 35.3553, 42.9980, 151.0918),
    ((30.0, 40.0, 5.0), -24.6, 2.0, -30.0, -14.2363, 62.8817, 251.7952),
    ((0.0, 100.0, 0.0), -24.6, 4.0, 10.0, 36.2865, 22.0506, 293.0480),
]


@pytest.mark.parametrize("row", TMS_TABLE)
def test_direction_and_delay_match_the_tms_table(row: tuple[Any, ...]) -> None:
    """Thompson, Moran & Swenson section 4.1 (CHECKS.md; numbers computed, tabulated to
    1e-4 m and 1e-4 deg): the verifier's hour-angle formula gives the tabulated
    elevation and azimuth, and its projected paths give w = b.s."""
    baseline, lat, ha_h, dec, w, el, az = row
    s = enu_from_hadec(np.radians(ha_h * 15.0), np.radians(dec), math.radians(lat))
    alt_rad, az_rad = altaz_from_enu(s)
    assert math.degrees(float(alt_rad)) == pytest.approx(el, abs=1e-4)
    assert math.degrees(float(az_rad)) == pytest.approx(az, abs=1e-4)
    pds = projected_paths(s, np.array([[0.0, 0.0, 0.0], baseline]))
    assert float(pds[1] - pds[0]) == pytest.approx(w, abs=1e-4)


def test_altitude_azimuth_of_meeus_example_13b() -> None:
    """Meeus, Astronomical Algorithms (2nd ed.), Ex. 13.b (CHECKS.md, secondary):
    H = 64.352133 deg, dec -6 43' 11.61", latitude +38 55' 17" give altitude 15.1249 deg
    and azimuth 68.0337 deg from south westward, i.e. 248.0337 deg north through east."""
    dec = -(6 + 43 / 60 + 11.61 / 3600)
    lat = 38 + 55 / 60 + 17 / 3600
    s = enu_from_hadec(np.radians(64.352133), np.radians(dec), math.radians(lat))
    alt_rad, az_rad = altaz_from_enu(s)
    assert math.degrees(float(alt_rad)) == pytest.approx(15.1249, abs=1e-4)
    assert math.degrees(float(az_rad)) == pytest.approx(248.0337, abs=1e-4)


def test_k_span_and_implied_constant_by_hand() -> None:
    """DOMAIN.md section 3 (Thompson, Moran & Swenson's delay relation), computed by
    hand: stations at 0 and 100 m east, s = (0.6, 0, 0.8) so p.s = (0, 60) m; constant
    paths (10, 20) m; ranges 0..120 m.  K must lie in [max(10, -40), min(130, 80)] =
    [10, 80]; with K = 50 the lines add x = (40, 90) and both imply K = 50."""
    pds = projected_paths(np.array([0.6, 0.0, 0.8]), np.array([[0, 0, 0], [100.0, 0, 0]]))
    assert pds == pytest.approx([0.0, 60.0], abs=1e-12)
    low, high = k_span(pds, np.array([10.0, 20.0]), np.zeros(2), np.full(2, 120.0))
    assert (float(low), float(high)) == pytest.approx((10.0, 80.0), abs=1e-12)
    assert implied_k(np.array([40.0, 90.0]), pds, np.array([10.0, 20.0])) == pytest.approx(
        [50.0, 50.0], abs=1e-12)
    narrow = k_span(pds, np.array([10.0, 20.0]), np.zeros(2), np.array([120.0, 25.0]))
    assert float(narrow[0]) > float(narrow[1])  # line 2 can add at most 25 m: infeasible


def test_moves_and_slews_by_hand() -> None:
    """README.md, *The night queue* (common practice, no source), by hand: lines moving
    30 m at 1 m/s and 20 m at 0.5 m/s take 40 s; a slew from (alt 30, az 350) to
    (alt 40, az 20) moves 30 deg in azimuth the short way, 20 s at 1.5 deg/s plus 5 s."""
    assert move_s(np.array([10.0, 50.0]), np.array([40.0, 30.0]), np.array([1.0, 0.5])) == 40.0
    rad = math.radians
    assert slew_s(rad(30), rad(350), rad(40), rad(20), Overheads()) == pytest.approx(25.0)
    assert float(azimuth_step(rad(10), rad(350))) == pytest.approx(rad(20))
    assert float(azimuth_step(0.0, rad(180))) == pytest.approx(math.pi)


# horizon: README.md, *Inputs* ("linear in azimuth, wrapping at 360"), values by hand
DEMO_MASK = ((0.0, 30.0), (150.0, 30.0), (190.0, 46.0), (230.0, 38.0), (260.0, 30.0))
WRAP_MASK = ((30.0, 40.0), (300.0, 20.0))


@pytest.mark.parametrize(("mask", "az", "limit"), [
    (DEMO_MASK, 170.0, 38.0),  # half way from 30 (150) to 46 (190)
    (DEMO_MASK, 190.0, 46.0),
    (DEMO_MASK, 210.0, 42.0),  # half way from 46 to 38
    (DEMO_MASK, 275.0, 30.0),  # from 260 on to 360 (= 0): 30 to 30
    (WRAP_MASK, 0.0, 20.0 + 20.0 * 60.0 / 90.0),  # 300 -> 390 runs from 20 to 40
    (WRAP_MASK, 330.0, 20.0 + 20.0 * 30.0 / 90.0),
    (WRAP_MASK, 30.0, 40.0),
    (WRAP_MASK, 165.0, 40.0 - 20.0 * 135.0 / 270.0),
    (WRAP_MASK, 390.0, 40.0),  # azimuths wrap too
    (((100.0, 35.0),), 10.0, 35.0),  # one point: constant
    (((0.0, 30.0), (360.0, 40.0)), 180.0, 35.0),  # 0 and 360 are both ends of one turn
    (((0.0, 30.0), (360.0, 40.0)), 359.0, 30.0 + 10.0 * 359.0 / 360.0),
])  # fmt: skip
def test_horizon_mask_by_hand(mask: tuple[tuple[float, float], ...], az: float,
                              limit: float) -> None:  # fmt: skip
    """README.md, *Inputs*, horizon masks (common practice, no source): hand values."""
    rad_mask = tuple((math.radians(a), math.radians(h)) for a, h in mask)
    got = mask_altitude(rad_mask, np.array([math.radians(az)]))
    assert math.degrees(float(got[0])) == pytest.approx(limit, abs=1e-9)


def test_no_horizon_mask_is_no_limit() -> None:
    """README.md, *Inputs*: horizon is optional; a station without one has no limit of
    its own (common practice, no source)."""
    assert np.all(np.isneginf(mask_altitude((), np.array([0.0, 3.0]))))


@pytest.mark.parametrize(("a", "b", "deg"), [
    ((0.0, 0.0), (90.0, 0.0), 90.0),
    ((10.0, 20.0), (10.0, 30.0), 10.0),
    ((0.0, 60.0), (180.0, 60.0), 60.0),  # over the pole
    ((359.5, 0.0), (0.5, 0.0), 1.0),  # across ra = 0
    ((45.0, -89.0), (225.0, -89.0), 2.0),
])  # fmt: skip
def test_angular_distance_by_hand(a: tuple[float, float], b: tuple[float, float],
                                  deg: float) -> None:  # fmt: skip
    """Angles between directions on the sphere, values by hand (standard spherical
    geometry; common practice, no source)."""
    got = angular_distance(*np.radians(a), *np.radians(b))
    assert math.degrees(float(got)) == pytest.approx(deg, abs=1e-9)


def test_tiny_angles_stay_accurate() -> None:
    """One milliarcsecond between two directions is measured to 1e-6 of itself (an
    arccosine alone would lose it; numerical practice, no source)."""
    got = angular_distance(1.0, 0.3, 1.0, 0.3 + MAS)
    assert float(got) == pytest.approx(MAS, rel=1e-6)


@pytest.mark.parametrize(("x", "j1_x", "v"), [(1.0, 0.4400505857, 0.880101),
                                              (2.0, 0.5767248078, 0.576725),
                                              (3.0, 0.3390589585, 0.226039)])
def test_uniform_disk_values(x: float, j1_x: float, v: float) -> None:
    """Abramowitz & Stegun 1964, table 9.1 (CHECKS.md, confirmed): J1(1) = 0.4400505857,
    J1(2) = 0.5767248078, J1(3) = 0.3390589585, so V = 2 J1(x)/x = 0.880101, 0.576725,
    0.226039 (computed)."""
    assert float(uniform_disk(x)) == pytest.approx(2.0 * j1_x / x, abs=1e-10)
    assert float(uniform_disk(x)) == pytest.approx(v, abs=1e-6)


def test_uniform_disk_first_null_and_centre() -> None:
    """Abramowitz & Stegun table 9.5: the first zero of J1 is at x = 3.8317059702."""
    assert float(uniform_disk(3.8317059702)) == pytest.approx(0.0, abs=1e-9)
    assert float(uniform_disk(0.0)) == 1.0


@pytest.mark.parametrize(("theta_mas", "baseline_m", "v2"), [
    (1.0, 100.0, 0.804976), (0.44, 298.0, 0.685129), (2.0, 298.0, 0.015399)])
def test_disk_visibility_matches_checks(theta_mas: float, baseline_m: float, v2: float) -> None:
    """CHECKS.md, Visibilities (uniform disk, x = pi theta B / lambda at 1.65 um;
    computed): V^2 = 0.804976 (1 mas, 100 m), 0.685129 (0.44 mas, 298 m) and 0.015399
    (2 mas, 298 m, past the first null)."""
    assert disk_visibility(theta_mas * MAS, baseline_m, 1.65e-6) ** 2 == pytest.approx(v2,
                                                                                        abs=2e-6)


def test_interpolated_sun_and_moon_match_astropy(demo: tuple[Doc, ArrayModel, Targets]) -> None:
    """The Sun and Moon sampled every 10 minutes and interpolated agree with astropy's
    direct transform (the reference, CHECKS.md *Reference libraries*) at every instant
    (here 7 min apart, off the nodes) within 3 arcsec over the demo night."""
    doc, array, _ = demo
    site = array.site
    t = np.arange(doc["visits"][0]["start_s"], doc["visits"][-1]["end_s"], 421.0)
    for name in ("sun", "moon"):
        alt, az = body_altaz(name, math.degrees(site.latitude_rad),
                             math.degrees(site.longitude_rad), site.height_m, t)  # fmt: skip
        direct = enu_from_altaz(alt, az)
        worst = float(np.max(angle_between(body_enu(name, site, t), direct)))
        assert worst < 3.0 * ARCSEC, (name, worst / ARCSEC)
