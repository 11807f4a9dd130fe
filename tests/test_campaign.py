"""An imaging campaign across two nights and two configurations (README, *Campaigns*).

The fictional demo's imaging target Ember-04 wants two visits in the medium and two in
the long configuration, 1.5 h apart in hour angle.  Hour angles here come from
astropy's full transform to the HADec frame (a general-purpose reference); the rest is
the campaign contract (common practice, no source).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import EarthLocation, HADec, SkyCoord
from astropy.time import Time

import scheduler.astro  # noqa: F401  (astropy offline)
from scheduler.cli.main import main
from scheduler.inputs.campaign_file import load_campaign, load_done
from scheduler.inputs.catalog import load_targets
from scheduler.model.errors import InputError

ROOT = Path(__file__).resolve().parent.parent
ARRAY = str(ROOT / "catalogs" / "demo_array.toml")
TARGETS = str(ROOT / "catalogs" / "demo_targets.csv")
CAMPAIGN = str(ROOT / "examples" / "demo_campaign.toml")
SPREAD_H = 1.5
HA_TOL_H = 2.0 / 3600.0  # the verifier's tolerance, 2 s of hour angle


def _hour_angles_h(mids_s: list[float]) -> np.ndarray:
    """Ember-04's apparent hour angle at the demo site (astropy, no refraction)."""
    site = EarthLocation.from_geodetic(-66.2 * u.deg, -26.1 * u.deg, 3050 * u.m)
    when = Time(np.asarray(mids_s), format="unix")
    star = SkyCoord(134.9535 * u.deg, -42.4134 * u.deg)
    hd = star.transform_to(HADec(obstime=when, location=site, pressure=0 * u.hPa))
    return np.asarray(hd.ha.wrap_at(180 * u.deg).hour)


def _plan(tmp: Path, name: str, config: str, night: str) -> dict:
    out = tmp / f"{name}.json"
    assert main(["plan", "--array", ARRAY, "--config", config, "--targets", TARGETS,
                 "--night", night, "--campaign", CAMPAIGN, "--campaign-log", str(tmp / "logs"),
                 "--time-limit", "4", "--seed", "1", "--deterministic", "--out", str(out),
                 "--quiet"]) == 0  # fmt: skip
    return json.loads(out.read_text())


def _log_done(tmp: Path, doc: dict, plan_name: str) -> None:
    for v in doc["visits"]:
        assert main(["log", "done", "--log", str(tmp / "logs" / f"{doc['night']['date']}.jsonl"),
                     "--plan", str(tmp / f"{plan_name}.json"), "--visit", v["id"], "--at",
                     v["end_utc"]]) == 0  # fmt: skip


def _mids(doc: dict) -> list[float]:
    return [0.5 * (v["start_s"] + v["end_s"]) for v in doc["visits"] if v["target"] == "Ember-04"]


@pytest.fixture(scope="module")
def nights(tmp_path_factory):
    """Night one in medium, its visits logged done, night two in long, night three in
    medium again (the campaign's medium visits are then all done)."""
    tmp = tmp_path_factory.mktemp("campaign")
    (tmp / "logs").mkdir()
    one = _plan(tmp, "one", "medium", "2027-04-18")
    _log_done(tmp, one, "one")
    two = _plan(tmp, "two", "long", "2027-04-19")
    three = _plan(tmp, "three", "medium", "2027-04-20")
    return tmp, one, two, three


def test_two_nights_two_configurations(nights):
    _, one, two, three = nights
    n1 = len(_mids(one))
    assert n1 >= 1, "night one takes medium visits of the campaign"
    assert 1 <= len(_mids(two)) <= 2, "night two takes long visits still wanted"
    assert len(_mids(three)) <= 2 - n1, "night three takes at most the medium visits left"
    if n1 == 2:
        assert _mids(three) == []
    done = two["campaign"]["targets"][0]["done"]
    assert [d["configuration"] for d in done] == ["medium"] * n1


def test_visits_are_spread_in_hour_angle(nights):
    _, one, two, _ = nights
    pairs = 0
    for doc in (one, two):
        ha = _hour_angles_h(_mids(doc))
        for k in range(len(ha)):
            for j in range(k):
                pairs += 1
                assert abs((ha[k] - ha[j] + 12) % 24 - 12) >= SPREAD_H - HA_TOL_H
    assert pairs >= 1, "some night should hold two visits of the imaging target"


def test_earlier_nights_hour_angles_are_kept_clear(nights):
    """Starts the campaign forbids tonight are exactly those whose mid-visit hour angle
    (astropy) lies within 1.5 h of a medium visit of night one."""
    from scheduler.cli.commands.common import load_inputs
    from scheduler.inputs.array_file import load_array
    from scheduler.model.campaign import CampaignState
    from scheduler.queue.campaign import campaign_night, forbidden_starts

    tmp, one, _, _ = nights
    targets = load_targets(TARGETS)
    state = CampaignState(load_campaign(CAMPAIGN, targets, load_array(ARRAY)),
                          load_done(tmp / "logs")[0])  # fmt: skip
    problem = campaign_night(load_inputs(ARRAY, "medium", TARGETS, "2027-04-21").problem(),
                             state)  # fmt: skip
    i = problem.targets.index("Ember-04")
    d = float(problem.targets.duration_s[i])
    bad = forbidden_starts(problem, i, d)
    assert bad
    night = problem.night
    starts = np.linspace(night.start_s, night.end_s - d, 400)
    inside = np.array([any(a < t < b for a, b in bad) for t in starts])
    ha = _hour_angles_h(list(starts + d / 2))
    done = _hour_angles_h(_mids(one))
    near = np.min(np.abs((ha[:, None] - done[None, :] + 12) % 24 - 12), axis=1)
    clear = np.abs(near - SPREAD_H) > 10 * HA_TOL_H  # away from the edges
    assert np.array_equal(inside[clear], (near < SPREAD_H)[clear])
    assert inside.any() and (~inside).any()


def test_campaign_view_counts_the_logs(nights, capsys):
    tmp, *_ = nights
    capsys.readouterr()
    assert main(["campaign", "--campaign", CAMPAIGN, "--log", str(tmp / "logs"), "--array",
                 ARRAY, "--targets", TARGETS, "--json"]) == 0  # fmt: skip
    doc = json.loads(capsys.readouterr().out)
    rows = {r["configuration"]: r for r in doc["targets"]}
    n1 = len(_mids(nights[1]))
    assert (rows["medium"]["done"], rows["medium"]["left"]) == (n1, 2 - n1)
    assert (rows["long"]["done"], rows["long"]["left"]) == (0, 2)
    assert rows["medium"]["nights"] == ["2027-04-18"]
    assert 0.0 < rows["medium"]["coverage"]["fill"] < 1.0
    assert rows["long"]["coverage"]["points"] == 0


def test_coverage_gain_lowers_what_a_repeat_visit_earns(nights):
    """A campaign target whose done visits already cover tonight's best hour angles is
    worth less per visit (between 0.05 and 1 of a first visit)."""
    from scheduler.cli.commands.common import load_inputs
    from scheduler.inputs.array_file import load_array
    from scheduler.model.campaign import CampaignState
    from scheduler.queue.campaign import campaign_night

    tmp, *_ = nights
    targets = load_targets(TARGETS)
    campaign = load_campaign(CAMPAIGN, targets, load_array(ARRAY))
    done, _ = load_done(tmp / "logs")
    problem = load_inputs(ARRAY, "medium", TARGETS, "2027-04-21").problem()
    i = problem.targets.index("Ember-04")
    fresh = campaign_night(problem, CampaignState(campaign, ()))
    after = campaign_night(problem, CampaignState(campaign, done))
    assert fresh.targets.value_weight[i] == 1.0
    assert 0.05 <= after.targets.value_weight[i] < 1.0
    assert len(after.past_hour_angles[i]) == len(_mids(nights[1]))
    assert fresh.past_hour_angles[i] == ()


def test_bad_campaign_file_is_reported_whole(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("[[targets]]\ntarget = 'Nobody-1'\nvisits = { medium = 0, nowhere = 2 }\n"
                   "colour = 'red'\n[[targets]]\ntarget = 'Ember-04'\nvisits = {}\n"
                   "ha_spread_h = 30\n")  # fmt: skip
    from scheduler.inputs.array_file import load_array

    with pytest.raises(InputError) as info:
        load_campaign(bad, load_targets(TARGETS), load_array(ARRAY))
    text = "\n".join(str(p) for p in info.value.problems)
    for expected in ("targets[0].target: 'Nobody-1' is not a target",
                     "targets[0].visits.medium: must be a whole number 1-1000, got 0",
                     "targets[0].visits.nowhere: 'nowhere' is not a configuration",
                     "targets[0].colour: unknown key", "targets[1].visits: must map",
                     "targets[1].ha_spread_h: must be a number of hours 0-12"):
        assert expected in text, text


def test_old_log_records_are_named_not_counted(tmp_path):
    logs = tmp_path / "logs"
    logs.mkdir()
    (logs / "n.jsonl").write_text('{"schema":"opdplan-log/1","event":"done","visit":"A#1",'
                                  '"at_utc":"2027-04-19T02:00:00Z"}\n')  # fmt: skip
    done, warnings = load_done(logs)
    assert done == () and len(warnings) == 1 and "not counted" in warnings[0]
    assert math.isfinite(len(warnings))


def test_a_replan_keeps_the_campaign(nights, tmp_path):
    """Replanning night two from its middle keeps the campaign block, stays within the
    long configuration's visits left, keeps the hour-angle spread, and passes verify."""
    tmp, _, two, _ = nights
    plan = tmp / "two.json"
    log = tmp_path / "two.jsonl"
    log.write_text("")
    ends = Time([two["night"]["start_utc"], two["night"]["end_utc"]])
    now = Time(ends.unix.mean(), format="unix").isot[:19] + "Z"
    out = tmp_path / "again.json"
    assert main(["replan", "--plan", str(plan), "--log", str(log), "--now", now, "--out",
                 str(out), "--time-limit", "3", "--quiet"]) == 0  # fmt: skip
    again = json.loads(out.read_text())
    assert again["campaign"] == two["campaign"]
    ha = _hour_angles_h(_mids(again))
    assert len(ha) <= 2
    for k in range(len(ha)):
        for j in range(k):
            assert abs((ha[k] - ha[j] + 12) % 24 - 12) >= SPREAD_H - HA_TOL_H
    assert main(["verify", str(out), "--array", ARRAY, "--targets", TARGETS]) == 0


def test_hour_angles_agree_with_astropy():
    """The night problem's hour angle (local Earth rotation angle less the CIRS right
    ascension) against astropy's HADec frame, within 5 arcsec of time-angle."""
    from scheduler.cli.commands.common import load_inputs

    problem = load_inputs(ARRAY, "long", TARGETS, "2027-04-19").problem()
    i = problem.targets.index("Ember-04")
    t = np.linspace(problem.night.start_s, problem.night.end_s, 7)
    ours_h = np.degrees(problem.hour_angle_rad(i, t)) / 15.0
    diff_arcsec = ((ours_h - _hour_angles_h(list(t)) + 12) % 24 - 12) * 15 * 3600
    assert np.all(np.abs(diff_arcsec) < 5.0), diff_arcsec
