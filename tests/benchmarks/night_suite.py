"""A seeded suite of INVENTED nights for the queue benchmark and its tests.

Everything is invented from a seed with numpy's ``default_rng``; no real observatory,
site, instrument, star or person is described or named.  Stations bear names of minerals
and trees, targets of plants (``Reed-07``), calibrators of their host (``Cal-Reed-07a``).
A night is what the command line reads: an array-file document and catalog rows of
strings.  Targets are put where the night offers them (right ascension near the local
sidereal time of the dark hours, declinations within the altitude limit and the delay
lines' reach) from rough sky facts: mean sidereal time from its standard linear
expression in days since J2000.0, solar declination ``-23.44 cos(360 (N + 10) / 365)``
deg on day of year N (both common practice), so time-critical windows keep an hour from
the estimated ends of the night (the real night comes from ``find_night``).  The
internal paths cancel the path differences towards one direction (the delay centre, on
the meridian at or tilted from the zenith); a fixed offset shortens its line's path.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable
from dataclasses import dataclass, fields, replace
from typing import Any

import numpy as np
import pandas as pd

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.astro.night import find_night
from scheduler.astro.problem import night_problem
from scheduler.inputs.array_file import parse_array
from scheduler.inputs.catalog import parse_targets
from scheduler.model.array import ArrayModel
from scheduler.model.problem import NightProblem
from scheduler.model.targets import Targets
from scheduler.model.times import iso_utc, parse_night

CONFIG = "tonight"
COLUMNS = ("name", "ra", "dec", "kind", "program", "priority", "duration_min", "visits",
           "min_separation_min", "needs_calibrator", "mag", "diameter_mas",
           "diameter_err_mas", "window_start_utc", "window_end_utc")  # fmt: skip
STATION_WORDS = ("quartz", "basalt", "garnet", "flint", "opal", "jasper", "slate", "mica",
                 "agate", "beryl", "cedar", "alder", "rowan", "hazel", "larch", "aspen",
                 "juniper", "spruce")  # fmt: skip
PLANT_WORDS = ("Reed", "Moss", "Fern", "Sedge", "Thorn", "Bramble", "Heath", "Clover",
               "Nettle", "Rush", "Bracken", "Tansy", "Yarrow", "Sorrel")  # fmt: skip
SCIENCE_MIN = (15, 20, 30, 45, 60, 75, 90)
CAL_MIN = (15, 20, 25)
J2000_S = 946_728_000.0  # 2000-01-01T12:00:00 UTC, POSIX seconds
SIDEREAL_DEG_H = 15.041  # sidereal degrees per hour of time
TWILIGHT_DEG = -12.0  # the array's sun_altitude_max_deg
NEW_MOON_2027 = dt.date(2027, 1, 7)  # a new Moon, within a day (common practice, no source)
SYNODIC_D = 29.530589  # mean days from new Moon to new Moon
WINDOW_MARGIN_H = 1.0  # time-critical windows keep this far from the estimated night ends


@dataclass(frozen=True)
class Night:
    """One invented night: array-file document, catalog rows (strings), date, configuration."""

    name: str
    description: str
    array: dict
    rows: list[dict]
    date: str
    config: str


# The nights of the suite, one a line: the fields of _Spec in order (see its comments).
_TABLE = """
name        site    lat   lon    date       ln base opd     sci sky  cal  mu wi of ma need alt ti sh
coldmoss    Shelf   -60.0 -68.5  2027-06-12 3  40   80  120 7   clus 1.2  1  1  1  0  0.80 30  0  y
ironbark    Downs   -51.5 169.0  2027-07-08 4  120  100 160 30  unif 1.5  4  1  0  1  0.80 30  0  n
saltpan     Ridge   -44.8 21.3   2027-05-03 6  300  140 200 150 clus 0.4  12 2  2  2  0.85 30  12 n
greyfern    Mesa    -33.2 -150.4 2027-02-10 5  80   80  140 25  unif 0.15 3  3  0  1  0.60 35  0  n
dustwillow  Flats   -24.1 115.6  2027-08-30 8  200  120 200 80  unif 0.8  10 2  3  2  0.80 30  15 n
reedwater   Bench   -15.3 -46.0  2027-08-11 3  30   80  100 20  clus 0.8  5  0  1  0  0.90 25  8  n
amberhollow Vale    -4.6  61.2   2027-03-21 4  250  150 200 45  unif 0.12 3  1  1  1  0.50 30  10 n
thornvale   Crest   2.9   -101.7 2027-10-09 7  150  110 190 70  clus 0.5  6  2  2  1  0.80 30  0  n
sunmeadow   Terrace 12.4  139.8  2027-01-14 5  60   80  150 25  unif 2.0  3  1  0  0  0.85 30  0  n
larkstone   Hill    21.0  -19.6  2026-12-04 6  100  90  170 50  clus 0.15 4  3  1  2  0.70 30  10 n
pinecrag    Rise    30.2  79.9   2027-04-01 3  300  160 200 12  unif 1.0  2  1  1  0  0.60 30  8  y
windgap     Saddle  38.4  -119.7 2027-10-24 8  180  120 200 90  clus 0.5  8  2  2  2  0.80 30  12 n
hollyfield  Knoll   44.1  9.8    2027-02-27 4  50   80  130 30  unif 0.8  3  1  0  1  0.75 30  0  n
frostbirch  Moor    50.0  -74.5  2026-11-19 5  240  140 200 60  clus 0.2  5  1  2  1  0.70 30  10 n
"""


@dataclass(frozen=True)
class _Spec:
    """What one night of the suite is meant to exercise: a line of _TABLE."""

    name: str
    site: str  # the site's name is the night's name and this
    lat: float
    lon: float
    date: str
    lines: int  # ln
    baseline_m: float  # base: the longest baseline of the stations fed tonight
    opd_lo_m: float  # opd: the lines' optical-path ranges are drawn between these two
    opd_hi_m: float
    science: int
    sky: str  # clustered or uniform
    cal_ratio: float  # calibrators per science target (below 0.3: few)
    multi: int  # mu: multi-visit targets
    windows: int  # wi: time-critical targets
    offsets: int  # of: lines with a fixed offset
    masks: int  # ma: stations with a horizon mask
    needs: float  # share of science targets needing a calibrator
    min_alt: float  # the altitude limit
    tilt: float  # ti: the delay centre's zenith distance towards the equator (deg)
    short: bool  # sh: science visits of 15-30 min only

    @property
    def dec_centre(self) -> float:
        """Declination of the delay centre on the meridian (deg)."""
        return self.lat - math.copysign(self.tilt, self.lat or -1.0)


def _specs() -> list[_Spec]:
    conv: dict[str, Callable[[str], Any]] = {"str": str, "float": float, "int": int,
                                             "bool": lambda x: x == "y"}  # fmt: skip
    kinds = [conv[str(f.type)] for f in fields(_Spec)]
    rows = [line.split() for line in _TABLE.strip().splitlines()[1:]]
    specs = [_Spec(*(k(v) for k, v in zip(kinds, row, strict=True))) for row in rows]
    return [replace(s, site=f"{s.name.capitalize()} {s.site}") for s in specs]


@dataclass(frozen=True)
class _Sky:
    """Rough facts of one night at one site, enough to place targets."""

    midnight_s: float  # local mean midnight, POSIX UTC seconds
    lst_mid_deg: float  # local mean sidereal time then
    half_h: float  # half the estimated dark time, hours
    dec_lo: float  # declinations reachable (altitude and delay), deg
    dec_hi: float


def _sky(s: _Spec, shortest_range_m: float) -> _Sky:
    """Midnight, its LST, the dark half-length and the reachable declinations."""
    day = dt.date.fromisoformat(s.date)
    midnight = dt.datetime(day.year, day.month, day.day, tzinfo=dt.UTC).timestamp() + 86400.0
    midnight -= s.lon / 15.0 * 3600.0
    lst = (280.46061837 + 360.98564736629 * (midnight - J2000_S) / 86400.0 + s.lon) % 360.0
    n = (day + dt.timedelta(days=1)).timetuple().tm_yday
    dsun = math.radians(-23.44 * math.cos(math.radians(360.0 / 365.0 * (n + 10))))
    phi = math.radians(s.lat)
    cos_h = (math.sin(math.radians(TWILIGHT_DEG)) - math.sin(phi) * math.sin(dsun)) / (
        math.cos(phi) * math.cos(dsun))  # fmt: skip
    if not -0.7 < cos_h < 1.0:  # not a polar night nor one shorter than about 6 h
        raise ValueError(f"{s.date} at latitude {s.lat}: a polar or a short night")
    reach = math.degrees(math.asin(min(1.0, 0.85 * shortest_range_m / s.baseline_m)))
    za = 90.0 - s.min_alt - 5.0
    lo = max(s.lat - za, s.dec_centre - reach, -88.0)
    hi = min(s.lat + za, s.dec_centre + reach, 88.0)
    return _Sky(midnight, lst, 12.0 - math.degrees(math.acos(cos_h)) / 15.0, lo, hi)


def _layout(n: int, n_fed: int, baseline_m: float, rng: np.random.Generator) -> np.ndarray:
    """Station positions (n, 3), the fed ones' longest baseline ``baseline_m``."""
    xy = rng.uniform(-1.0, 1.0, (n, 2))
    xy[0] = 0.0
    fed = xy[:n_fed]
    longest = float(np.max(np.linalg.norm(fed[:, None] - fed[None, :], axis=-1)))
    xy *= baseline_m / longest
    up = rng.normal(0.0, 0.004 * baseline_m, n)
    up[0] = 0.0
    return np.column_stack([xy, up])


def _mask(min_alt: float, rng: np.random.Generator) -> list[list[float]]:
    """A horizon bump: a neighbouring dome or building in one direction."""
    az0 = float(rng.uniform(0.0, 360.0))
    top = round(min_alt + float(rng.uniform(8.0, 20.0)), 1)
    return [[round((az0 - 50.0) % 360.0, 1), min_alt], [round(az0, 1), top],
            [round((az0 + 50.0) % 360.0, 1), min_alt]]  # fmt: skip


def _array(s: _Spec, rng: np.random.Generator, spare: bool = True) -> tuple[dict, float]:
    """The array-file document of a spec (with 0-2 stations not fed tonight when
    ``spare``), and the shortest line range (m)."""
    n_st = s.lines + (int(rng.integers(0, 3)) if spare else 0)
    names = [str(w) for w in rng.choice(STATION_WORDS, n_st, replace=False)]
    pos = _layout(n_st, s.lines, s.baseline_m, rng)
    lines = [f"line-{k + 1}" for k in range(s.lines)]
    ranges = [round(float(rng.uniform(s.opd_lo_m, s.opd_hi_m)) / 5.0) * 5.0 for _ in lines]
    rates = [round(float(rng.uniform(0.3, 1.0)), 2) for _ in lines]
    offsets = {lines[int(k)]: float(rng.choice([10.0, 17.5, 25.0, 32.5, 40.0]))
               for k in rng.choice(s.lines, s.offsets, replace=False)}  # fmt: skip
    p, d = math.radians(s.lat), math.radians(s.dec_centre)  # unit vector to the centre
    centre = np.array([0.0, math.cos(p) * math.sin(d) - math.sin(p) * math.cos(d),
                       math.sin(p) * math.sin(d) + math.cos(p) * math.cos(d)])  # fmt: skip
    masked = set(rng.choice(s.lines, s.masks, replace=False).tolist())
    stations = []
    for k, (name, xyz) in enumerate(zip(names, pos, strict=True)):
        f = offsets.get(lines[k], 0.0) if k < s.lines else 0.0
        path = 80.0 + 2 * s.baseline_m + float(xyz @ centre) - f + rng.uniform(-2.0, 2.0)
        st: dict[str, Any] = {"name": name, "east_m": round(float(xyz[0]), 2),
                              "north_m": round(float(xyz[1]), 2), "up_m": round(float(xyz[2]), 2),
                              "internal_path_m": round(path, 3)}  # fmt: skip
        if k in masked:
            st["horizon"] = _mask(s.min_alt, rng)
        stations.append(st)
    config: dict[str, Any] = {"name": CONFIG, "feeds": dict(zip(lines, names, strict=False)),
                              "description": f"invented configuration of {s.site}"}  # fmt: skip
    if offsets:
        config["fixed_offsets_m"] = offsets
    doc = {
        "site": {"name": f"{s.site} (invented)", "latitude_deg": s.lat, "longitude_deg": s.lon,
                 "height_m": round(float(rng.uniform(1500.0, 4000.0)), 0)},
        "limits": {"min_altitude_deg": s.min_alt, "max_altitude_deg": 87.0,
                   "sun_altitude_max_deg": TWILIGHT_DEG, "moon_separation_min_deg": 15.0},
        "overheads": {"acquisition_s": 480.0, "slew_rate_deg_s": 1.5, "settle_s": 5.0},
        "stations": stations,
        "delay_lines": [{"name": ln, "opd_min_m": 0.0, "opd_max_m": r, "max_rate_m_s": v}
                        for ln, r, v in zip(lines, ranges, rates, strict=True)],
        "configurations": [config],
    }  # fmt: skip
    return doc, min(ranges)


def _places(sky: _Sky, n: int, clustered: bool,
            rng: np.random.Generator) -> tuple[np.ndarray, np.ndarray]:  # fmt: skip
    """Right ascensions and declinations (deg) of ``n`` targets up during the night."""
    ra_span = sky.half_h * SIDEREAL_DEG_H + 20.0
    s_lo, s_hi = math.sin(math.radians(sky.dec_lo)), math.sin(math.radians(sky.dec_hi))
    if not clustered:
        ra = sky.lst_mid_deg + rng.uniform(-ra_span, ra_span, n)
        return ra % 360.0, np.degrees(np.arcsin(rng.uniform(s_lo, s_hi, n)))
    patches = int(rng.integers(2, 5))
    c_ra = sky.lst_mid_deg + rng.uniform(-0.8, 0.8, patches) * sky.half_h * SIDEREAL_DEG_H
    c_dec = np.degrees(np.arcsin(rng.uniform(s_lo, s_hi, patches)))
    c_dec = np.clip(c_dec, sky.dec_lo + 4.0, sky.dec_hi - 4.0)
    sigma = rng.uniform(2.5, 5.0, patches)
    which = rng.integers(0, patches, n)
    dec = np.clip(c_dec[which] + rng.normal(0.0, 1.0, n) * sigma[which], -88.0, 88.0)
    ra = c_ra[which] + rng.normal(0.0, 1.0, n) * sigma[which] / np.cos(np.radians(dec))
    return ra % 360.0, dec


def _row(**cells: object) -> dict:
    """A catalog row: every column, as strings."""
    return {c: "" if cells.get(c) is None else str(cells[c]) for c in COLUMNS}


def _window(sky: _Sky, transit_h: float, dur_min: int,
            rng: np.random.Generator) -> tuple[str, str]:  # fmt: skip
    """A time-critical window around a target's transit, inside the dark hours."""
    length_h = (dur_min + float(rng.uniform(40.0, 120.0))) / 60.0
    edge = sky.half_h - WINDOW_MARGIN_H
    start = min(max(transit_h + float(rng.uniform(-0.6, 0.2)) - length_h / 2, -edge),
                edge - length_h)  # fmt: skip
    t0 = round((sky.midnight_s + start * 3600.0) / 60.0) * 60.0
    return iso_utc(t0), iso_utc(t0 + round(length_h * 60.0) * 60.0)


def _science(s: _Spec, sky: _Sky, rng: np.random.Generator) -> list[dict]:
    """Science rows: the targets nearest the meridian at midnight are the multi-visit
    ones; time-critical ones transit well inside the night."""
    ra, dec = _places(sky, s.science, s.sky == "clus", rng)
    tr = ((ra - sky.lst_mid_deg + 180.0) % 360.0 - 180.0) / SIDEREAL_DEG_H  # hours to transit
    order = np.argsort(np.abs(tr))
    multi = set(order[: s.multi].tolist())
    inside = [int(i) for i in rng.permutation(s.science)
              if i not in multi and abs(tr[i]) < sky.half_h - WINDOW_MARGIN_H - 0.5]  # fmt: skip
    timed = set(inside[: s.windows])
    stems = [str(w) for w in rng.choice(PLANT_WORDS, int(rng.integers(2, 5)), replace=False)]
    count = dict.fromkeys(stems, 0)
    rows = []
    for i in range(s.science):
        stem = stems[int(rng.integers(0, len(stems)))]
        count[stem] += 1
        dur = int(rng.choice(SCIENCE_MIN[:3] if s.short else SCIENCE_MIN))
        visits = int(rng.integers(2, 5)) if i in multi else 1
        sep = int(rng.choice([45, 60, 75, 90, 105, 120])) if i in multi else 0
        ws, we = _window(sky, float(tr[i]), dur, rng) if i in timed else (None, None)
        rows.append(_row(
            name=f"{stem}-{count[stem]:02d}", ra=f"{ra[i]:.4f}", dec=f"{dec[i]:.4f}",
            kind="science", program=f"P-{stem.lower()}", priority=int(rng.integers(1, 11)),
            duration_min=dur, visits=visits, min_separation_min=sep,
            needs_calibrator="true" if rng.random() < s.needs else "false",
            mag=f"{rng.uniform(1.5, 7.0):.1f}", diameter_mas=f"{rng.uniform(0.3, 4.0):.2f}",
            window_start_utc=ws, window_end_utc=we))  # fmt: skip
    return rows


def _calibrators(sci: list[dict], ratio: float, rng: np.random.Generator) -> list[dict]:
    """Calibrators 1.5-8 deg from host science targets: many hosts (every science target
    once before any twice) and magnitudes within 1.2 mag, or few hosts and magnitudes
    within 2.5 mag (some then unsuitable)."""
    n_sci = len(sci)
    n_cal = max(2, round(ratio * n_sci))
    many = ratio >= 0.3
    if many:
        extra = rng.choice(n_sci, max(0, n_cal - n_sci))
        hosts = np.concatenate([rng.permutation(n_sci), extra])[:n_cal]
    else:
        hosts = rng.choice(n_sci, n_cal, replace=n_cal > n_sci)
    letters: dict[int, int] = {}
    rows = []
    for h in hosts.tolist():
        host = sci[h]
        letters[h] = letters.get(h, 0) + 1
        d, pa = float(rng.uniform(1.5, 8.0)), float(rng.uniform(0.0, 2 * math.pi))
        dec = float(np.clip(float(host["dec"]) + d * math.sin(pa), -88.0, 88.0))
        ra = (float(host["ra"]) + d * math.cos(pa) / math.cos(math.radians(dec))) % 360.0
        dmag = float(rng.uniform(-1.2, 1.2) if many else rng.uniform(-2.5, 2.5))
        rows.append(_row(
            name=f"Cal-{host['name']}{'abcdefgh'[letters[h] - 1]}", ra=f"{ra:.4f}",
            dec=f"{dec:.4f}", kind="calibrator", duration_min=int(rng.choice(CAL_MIN)),
            mag=f"{float(host['mag']) + dmag:.1f}",
            **_calibrator_size(rng)))  # fmt: skip
    return rows


def _calibrator_size(rng: np.random.Generator) -> dict[str, str]:
    """A small, well-measured calibrator: 0.05-0.3 mas, known to 3-8 %."""
    d = float(rng.uniform(0.05, 0.3))
    return {"diameter_mas": f"{d:.3f}", "diameter_err_mas": f"{d * rng.uniform(0.03, 0.08):.4f}"}


def _near_counts(rows: list[dict[str, str]]) -> np.ndarray:
    """Per science target needing one: calibrators within 10 deg and 1.5 mag."""
    sci = [r for r in rows if r["kind"] == "science" and r["needs_calibrator"] == "true"]
    cal = [r for r in rows if r["kind"] == "calibrator"]
    a, c = (np.array([[float(r[k]) for k in ("ra", "dec", "mag")] for r in x]).reshape(-1, 3)
            for x in (sci, cal))  # fmt: skip
    ra, dec = [np.radians(x[:, 0]) for x in (a, c)], [np.radians(x[:, 1]) for x in (a, c)]
    unit = [np.column_stack([np.cos(d) * np.cos(r), np.cos(d) * np.sin(r), np.sin(d)])
            for r, d in zip(ra, dec, strict=True)]  # fmt: skip
    close = unit[0] @ unit[1].T >= math.cos(math.radians(10.0))
    near_mag = np.abs(a[:, 2, None] - c[None, :, 2]) <= 1.5
    return np.asarray((close & near_mag).sum(axis=1))


def _describe(s: _Spec, doc: dict[str, Any], rows: list[dict[str, str]], sky: _Sky) -> str:
    ranges = sorted(ln["opd_max_m"] for ln in doc["delay_lines"])
    rates = sorted(ln["max_rate_m_s"] for ln in doc["delay_lines"])
    offsets = doc["configurations"][0].get("fixed_offsets_m", {})
    near = _near_counts(rows)
    sci = [r for r in rows if r["kind"] == "science"]
    fill = sum(int(r["visits"]) * (int(r["duration_min"]) + 8) for r in sci) / 120.0 / sky.half_h
    return (
        f"invented site {s.site}, latitude {s.lat:+.1f} deg, longitude {s.lon:+.1f} deg, night "
        f"{s.date} (about {2 * sky.half_h:.1f} h dark); {s.lines} delay lines (ranges "
        f"{ranges[0]:.0f}-{ranges[-1]:.0f} m, rates {rates[0]:.2f}-{rates[-1]:.2f} m/s), "
        f"fixed offsets {offsets or 'none'}; {len(doc['stations'])} stations, longest baseline "
        f"{s.baseline_m:.0f} m, {sum('horizon' in st for st in doc['stations'])} with a "
        f"horizon mask; {'clustered' if s.sky == 'clus' else 'uniform'} sky; {len(sci)} "
        f"science targets ({s.multi} multi-visit, {s.windows} time-critical, {len(near)} "
        f"needing a calibrator), {len(rows) - len(sci)} calibrators "
        f"({'many' if s.cal_ratio >= 0.3 else 'few'}: median {np.median(near):.0f} within 10 "
        f"deg and 1.5 mag, {int(np.sum(near == 0))} science with none); "
        f"{'sparse' if fill < 1.0 else 'crowded' if fill >= 2.5 else 'full'}: science visits "
        f"with acquisition ask {fill:.1f} x the dark time"
    )  # fmt: skip


def _night(s: _Spec, rng: np.random.Generator) -> Night:
    doc, r_min = _array(s, rng)
    sky = _sky(s, r_min)
    sci = _science(s, sky, rng)
    rows = sci + _calibrators(sci, s.cal_ratio, rng)
    return Night(s.name, _describe(s, doc, rows, sky), doc, rows, s.date, CONFIG)


def suite(seed: int = 2027) -> list[Night]:
    """The invented nights of the suite, each from ``default_rng([seed, k])``."""
    return [_night(s, np.random.default_rng([seed, k])) for k, s in enumerate(_specs())]


def small(seed: int) -> Night:
    """A small crowded invented night for exhaustive search: 2-4 stations within about
    80 m, 3-5 science targets of 30-90 min (3-6 visits, the first needs a calibrator) and
    one calibrator near all of them on one patch of sky, a high altitude limit, near a new
    Moon: 6-9 candidate visits with 3 calibrator copies."""
    rng = np.random.default_rng([seed, 7919])
    lat = float(rng.uniform(-40.0, 40.0))
    lunation = int(rng.integers(0, 9)) * SYNODIC_D + float(rng.uniform(-3.0, 3.0))
    date = (NEW_MOON_2027 + dt.timedelta(days=lunation)).isoformat()  # no Moon on the patch
    n_st = int(rng.integers(2, 5))
    s = _Spec(f"small-{seed}", "Small Hollow", round(lat, 2), round(float(rng.uniform(-180, 180)),
              2), date, n_st, float(rng.uniform(30, 80)), 110.0, 130.0, int(rng.integers(3, 6)),
              "clus", 0.0, 0, 0, 0, 0, 1.0, round(float(rng.uniform(55, 62)), 1), 0.0,
              False)  # fmt: skip
    doc, _ = _array(s, rng, spare=False)
    sky = _sky(s, 1e3)
    c_dec = lat + float(rng.choice([-1.0, 1.0]) * rng.uniform(8.0, 11.0))  # off the zenith
    c_ra = sky.lst_mid_deg + float(rng.uniform(-10.0, 10.0))
    rows = []
    for k in range(s.science):
        visits = 2 if k == 0 and rng.random() < 0.5 else 1
        rows.append(_row(
            name=f"Sedge-{k + 1:02d}", ra=f"{(c_ra + rng.uniform(-4, 4)) % 360:.4f}",
            dec=f"{c_dec + rng.uniform(-3, 3):.4f}", kind="science", program="P-sedge",
            priority=int(rng.integers(1, 11)), duration_min=int(rng.choice(SCIENCE_MIN[2:])),
            visits=visits, min_separation_min=45 if visits > 1 else 0,
            needs_calibrator="true" if k == 0 or rng.random() < 0.7 else "false",
            mag="5.0", diameter_mas=f"{rng.uniform(0.5, 2.0):.2f}"))  # fmt: skip
    total = sum(int(r["visits"]) for r in rows)
    rows.append(_row(name="Cal-Sedge-01a", ra=f"{c_ra % 360:.4f}", dec=f"{c_dec:.4f}",
                     kind="calibrator", duration_min=int(rng.choice(CAL_MIN)), mag="5.4",
                     diameter_mas="0.20"))  # fmt: skip
    text = (f"invented small night: latitude {lat:+.1f} deg, {n_st} stations, {s.science} "
            f"science targets ({total} visits) and one calibrator on one patch")  # fmt: skip
    return Night(s.name, text, doc, rows, date, CONFIG)


def load(night: Night) -> tuple[ArrayModel, Targets]:
    """The array model and catalog of a night, through the loaders."""
    array = parse_array(night.array, f"<{night.name} array>")
    return array, parse_targets(pd.DataFrame(night.rows), f"<{night.name} targets>")


def problem(night: Night, loaded: tuple[ArrayModel, Targets] | None = None) -> NightProblem:
    """The night problem (``loaded``: the result of :func:`load`, to skip reloading)."""
    array, targets = loaded or load(night)
    dark = find_night(array, parse_night(night.date))
    return night_problem(array, array.beams(night.config), targets, dark)
