"""The independent verifier: re-checks a plan document by another code path.

It shares nothing with the sequencers' geometry or transition model: directions come
from astropy's full ICRS -> AltAz transform (no refraction) at every minute of every
visit, delay feasibility and carriage moves are recomputed here from the array
description, and calibrator suitability from astropy separations and its own
visibility formula.  It returns a list of problems; an empty list means the plan holds.
"""

from __future__ import annotations

import astropy.units as u
import numpy as np
from astropy.coordinates import AltAz, SkyCoord, get_body
from scipy.special import j1

from scheduler.astro.ephemeris import location, to_time
from scheduler.geometry.horizon import mask_altitude
from scheduler.geometry.motion import positions_at
from scheduler.model.array import ArrayModel
from scheduler.model.targets import Targets
from scheduler.model.times import parse_utc

ALT_TOL_RAD = np.radians(1.0 / 3600.0)  # 1 arcsec
OPD_TOL_M = 0.001  # 1 mm
TIME_TOL_S = 1.0
SAMPLE_S = 60.0


def _sky(array: ArrayModel, targets: Targets, idx: np.ndarray, t: np.ndarray):
    ra, dec = positions_at(targets, float(np.mean(t)))
    coord = SkyCoord(ra=ra[idx] * u.rad, dec=dec[idx] * u.rad)
    frame = AltAz(obstime=to_time(t), location=location(array.site), pressure=0 * u.hPa)
    aa = coord.transform_to(frame)
    return aa.alt.rad, aa.az.rad, frame


def _enu(alt, az):
    return np.stack([np.cos(alt) * np.sin(az), np.cos(alt) * np.cos(az), np.sin(alt)], -1)


def _sample_all(array, targets, visits):
    """astropy directions of every minute of every visit in one transform; also the Sun
    and the Moon then.  Returns per-visit slices into the flat arrays."""
    idx, times, cuts = [], [], []
    for v in visits:
        t = np.append(np.arange(float(v["start_s"]), float(v["end_s"]), SAMPLE_S), v["end_s"])
        cuts.append((len(times), len(times) + len(t)))
        idx += [targets.index(v["target"])] * len(t)
        times += list(t)
    if not times:
        return None
    idx, times = np.array(idx), np.array(times)
    alt, az, frame = _sky(array, targets, idx, times)
    sun = get_body("sun", frame.obstime, location=frame.location).transform_to(frame)
    moon = get_body("moon", frame.obstime, location=frame.location).transform_to(frame)
    return alt, az, sun.alt.rad, sun.az.rad, moon.alt.rad, moon.az.rad, cuts


def verify_plan(doc: dict, array: ArrayModel, targets: Targets) -> list[str]:
    """Every way in which the plan breaks a rule, as sentences (empty: valid)."""
    bad: list[str] = []
    lim, over = array.limits, array.overheads
    config = array.configuration(doc["configuration"])
    out = set(doc.get("out", []))
    feeds = {ln: st for ln, st in config.feeds if ln not in out and st not in out}
    lines = [d["name"] for d in doc["delay_lines"]]
    if set(lines) != set(feeds):
        bad.append(f"delay lines {sorted(lines)} are not those of {config.name} "
                   f"(less {sorted(out)})")  # fmt: skip
        return bad
    pos = np.array([array.station(feeds[ln]).enu_m for ln in lines])
    path = np.array([array.station(feeds[ln]).internal_path_m + config.offset_m(ln)
                     for ln in lines])  # fmt: skip
    dl = [array.delay_line(ln) for ln in lines]
    lo_m = np.array([d.opd_min_m for d in dl])
    hi_m = np.array([d.opd_max_m for d in dl])
    rate = np.array([d.max_rate_m_s for d in dl])
    masks = [array.station(feeds[ln]).horizon for ln in lines]
    night_start = parse_utc(doc["night"]["start_utc"])
    night_end = parse_utc(doc["night"]["end_utc"])
    rules = doc.get("rules", {})
    visits = [v for v in doc["visits"] if v["target"] in targets.names]
    bad += [f"{v['id']}: target {v['target']!r} is not in the catalog"
            for v in doc["visits"] if v["target"] not in targets.names]  # fmt: skip
    start_state = doc.get("start_state")
    closures = [(parse_utc(a), parse_utc(b)) for a, b in doc.get("closures", [])]
    sky = _sample_all(array, targets, visits)
    prev = None
    if start_state is not None:
        prev = ("the start state", start_state)
    for n, v in enumerate(visits):
        vid = v["id"]
        i = targets.index(v["target"])
        t0, t1 = float(v["start_s"]), float(v["end_s"])
        if t0 < night_start - TIME_TOL_S or t1 > night_end + TIME_TOL_S:
            bad.append(f"{vid}: outside the night")
        if any(t0 < b - TIME_TOL_S and t1 > a + TIME_TOL_S for a, b in closures):
            bad.append(f"{vid}: overlaps a closure")
        lo_k, hi_k = sky[6][n]
        alt, az = sky[0][lo_k:hi_k], sky[1][lo_k:hi_k]
        if (alt < lim.min_altitude_rad - ALT_TOL_RAD).any() or (
            alt > lim.max_altitude_rad + ALT_TOL_RAD
        ).any():
            bad.append(f"{vid}: altitude leaves the limits")
        for ln, mask in zip(lines, masks, strict=True):
            if mask and (alt < mask_altitude(mask, az) - ALT_TOL_RAD).any():
                bad.append(f"{vid}: behind the horizon mask of {feeds[ln]}")
        s = _enu(alt, az)
        pds = s @ pos.T  # (T, L)
        k_lo = (lo_m + path - pds).max(axis=1)
        k_hi = (hi_m + path - pds).min(axis=1)
        if (k_lo > k_hi + OPD_TOL_M).any():
            bad.append(f"{vid}: not delay-feasible at every minute")
        sun_alt, sun_az = sky[2][lo_k:hi_k], sky[3][lo_k:hi_k]
        moon_alt, moon_az = sky[4][lo_k:hi_k], sky[5][lo_k:hi_k]
        sun_sep = np.arccos(np.clip(np.sum(s * _enu(sun_alt, sun_az), -1), -1, 1))
        if (sun_alt > lim.sun_altitude_max_rad + 1e-4).any():
            bad.append(f"{vid}: the Sun is above the night limit")
        if (sun_sep < lim.sun_separation_min_rad).any():
            bad.append(f"{vid}: too close to the Sun")
        m_sep = np.arccos(np.clip(np.sum(s * _enu(moon_alt, moon_az), -1), -1, 1))
        if ((m_sep < lim.moon_separation_min_rad - 1e-3) & (moon_alt > 0)).any():
            bad.append(f"{vid}: too close to the Moon")
        ws, we = targets.window_start_s[i], targets.window_end_s[i]
        if not np.isnan(ws) and (t0 < ws - TIME_TOL_S or t1 > we + TIME_TOL_S):
            bad.append(f"{vid}: outside its time-critical window")
        for key, k in (("opd_start_m", 0), ("opd_end_m", -1)):
            x = np.array([v[key][ln] for ln in lines])
            if (x < lo_m - 1e-6).any() or (x > hi_m + 1e-6).any():
                bad.append(f"{vid}: {key} outside a delay line's range")
            kk = x - pds[k] + path  # each line's implied common constant K
            if kk.max() - kk.min() > 2 * OPD_TOL_M:
                bad.append(f"{vid}: {key} inconsistent with the geometry "
                           f"({(kk.max() - kk.min()) * 1e3:.1f} mm)")  # fmt: skip
        x0 = np.array([v["opd_start_m"][ln] for ln in lines])
        bad += _transition(vid, prev, t0, alt[0], az[0], x0, array, targets, lines, rate, over,
                           night_start)  # fmt: skip
        prev = (v, alt[-1], az[-1], np.array([v["opd_end_m"][ln] for ln in lines]))
    done_cals = [d for d in doc.get("done", []) if d.get("kind") == "calibrator"
                 and d["target"] in targets.names]  # fmt: skip
    bad += _brackets(visits, targets, array, rules, pos, done_cals)
    return bad


def _transition(vid, prev, t0, alt, az, x0, array, targets, lines, rate, over, night_start):
    """Is there time before this visit, from the previous visit or the start state?"""
    if prev is None:
        if t0 < night_start + over.acquisition_s - TIME_TOL_S:
            return [f"{vid}: no time for the first acquisition"]
        return []
    if prev[0] == "the start state":
        state = prev[1]
        end = parse_utc(state["utc"])
        if t0 < end - TIME_TOL_S:
            return [f"{vid}: starts before the replan's start {state['utc']}"]
        name = state.get("pointing")
        if name in targets.names:
            p_alt, p_az, _ = _sky(array, targets, np.array([targets.index(name)]), np.array([end]))
            daz = abs(np.angle(np.exp(1j * (az - p_az[0]))))
            slew = max(daz, abs(alt - p_alt[0])) / over.slew_rate_rad_s + over.settle_s
        else:
            slew = np.pi / over.slew_rate_rad_s + over.settle_s
        opd = state.get("opd_m")
        carriage = 0.0
        if opd:
            x_prev = np.array([opd.get(ln, np.nan) for ln in lines])
            ok = ~np.isnan(x_prev)
            carriage = float(np.max(np.abs(x0 - x_prev)[ok] / rate[ok], initial=0.0))
            carriage += over.settle_s
        label = "the start state"
    else:
        pv, p_alt, p_az, p_x = prev
        end = float(pv["end_s"])
        if t0 < end - TIME_TOL_S:
            return [f"{vid}: overlaps {pv['id']}"]
        daz = abs(np.angle(np.exp(1j * (az - p_az))))
        slew = max(daz, abs(alt - p_alt)) / over.slew_rate_rad_s + over.settle_s
        carriage = float(np.max(np.abs(x0 - p_x) / rate)) + over.settle_s
        label = pv["id"]
    need = max(slew, carriage) + over.acquisition_s
    gap = t0 - end
    if gap < need - TIME_TOL_S:
        return [f"{vid}: transition of {gap:.0f} s after {label} is shorter than the "
                f"{need:.0f} s the telescopes and carriages need"]  # fmt: skip
    return []


def _brackets(visits, targets: Targets, array, rules: dict, pos, done_cals=()) -> list[str]:
    gap = float(rules.get("calibrator_gap_min", 60.0)) * 60.0
    max_sep = float(rules.get("calibrator_max_sep_deg", 10.0))
    max_dmag = float(rules.get("calibrator_max_dmag", 1.5))
    min_vis = float(rules.get("calibrator_min_visibility", 0.8))
    wavelength = float(rules.get("wavelength_um", 1.65)) * 1e-6
    longest = float(np.max(np.linalg.norm(pos[:, None] - pos[None], axis=-1)))
    known = [v for v in visits if v["target"] in targets.names]
    cals = [v for v in known if not targets.is_science[targets.index(v["target"])]]
    cals += list(done_cals)
    bad = []
    for v in known:
        i = targets.index(v["target"])
        if not targets.needs_calibrator[i]:
            continue
        sci = SkyCoord(ra=targets.ra_rad[i] * u.rad, dec=targets.dec_rad[i] * u.rad)

        def suits(c, i=i, sci=sci):
            j = targets.index(c["target"])
            cal = SkyCoord(ra=targets.ra_rad[j] * u.rad, dec=targets.dec_rad[j] * u.rad)
            if sci.separation(cal).deg > max_sep + 1e-9:
                return False
            if abs(targets.mag[i] - targets.mag[j]) > max_dmag:
                return False
            d = targets.diameter_rad[j]
            if not np.isnan(d) and d > 0:
                x = np.pi * d * longest / wavelength
                return 2 * j1(x) / x >= min_vis
            return True

        before = [c for c in cals if 0 <= v["start_s"] - c["end_s"] <= gap + TIME_TOL_S]
        after = [c for c in cals if 0 <= c["start_s"] - v["end_s"] <= gap + TIME_TOL_S]
        if not any(suits(c) for c in before):
            bad.append(f"{v['id']}: no suitable calibrator within {gap / 60:.0f} min before")
        if not any(suits(c) for c in after):
            bad.append(f"{v['id']}: no suitable calibrator within {gap / 60:.0f} min after")
    return bad
