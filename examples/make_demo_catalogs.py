"""Write the opdplan demo scenario: catalogs/demo_array.toml and catalogs/demo_targets.csv.

All data are FICTIONAL: site, stations, targets, calibrators and programs are invented for
the demo and describe no real place or sky object. The array is fixed by hand; the targets
come from numpy default_rng(2027), so every run writes identical files. The script prints,
per configuration, the sky fraction above the altitude limit that is delay-feasible.

Usage:  python examples/make_demo_catalogs.py
"""

import csv
from pathlib import Path

import numpy as np

OUT = Path(__file__).resolve().parent.parent / "catalogs"
LAT_DEG, LON_DEG, HEIGHT_M = -26.1, -66.2, 3050.0
MIN_ALT_DEG = 30.0

# name: (east_m, north_m, up_m, internal_path_m)
STATIONS = {
    "quartz": (0.0, 0.0, 0.0, 35.0), "basalt": (18.0, 22.0, 0.4, 41.5),
    "garnet": (-24.0, 16.0, -0.3, 44.0), "flint": (8.0, -31.0, 0.2, 39.0),
    "opal": (70.0, 52.0, 0.9, 62.5), "jasper": (-55.0, -35.0, -0.8, 57.0),
    "slate": (140.0, -55.0, 2.2, 98.0), "mica": (-105.0, 115.0, -2.6, 104.5),
}
# (azimuth deg from north through east, minimum altitude deg): nearby buildings
HORIZONS = {
    "jasper": [(0.0, 30.0), (150.0, 30.0), (190.0, 46.0), (230.0, 38.0), (260.0, 30.0)],
    "slate": [(0.0, 30.0), (60.0, 30.0), (95.0, 43.0), (130.0, 34.0), (170.0, 30.0)],
}
DELAY_LINES = {f"rail-{i}": (0.0, 120.0, 0.8 if i == 6 else 1.0) for i in range(1, 7)}
CONFIGS = {  # name: (delay line -> station, fixed offsets in metres of optical path)
    "compact": (dict(zip(["rail-1", "rail-2", "rail-3", "rail-4"],
                         ["quartz", "basalt", "garnet", "flint"], strict=True)), {}),
    "medium": (dict(zip(["rail-1", "rail-2", "rail-3", "rail-4", "rail-5", "rail-6"],
                        ["quartz", "basalt", "garnet", "flint", "opal", "jasper"], strict=True)),
               {"rail-1": 20.0}),
    # the long offsets roughly equalise the paths towards the zenith
    "long": (dict(zip(["rail-1", "rail-2", "rail-3", "rail-5", "rail-6"],
                      ["quartz", "jasper", "opal", "slate", "mica"], strict=True)),
             {"rail-1": 72.0, "rail-2": 49.5, "rail-3": 45.5, "rail-5": 11.0}),
}

PROGRAMS = {  # code: (name stem, base priority; 10 = most important)
    "P-ember": ("Ember", 9), "P-tide": ("Tide", 8), "P-lantern": ("Lantern", 6),
    "P-thistle": ("Thistle", 5), "P-cobble": ("Cobble", 3), "P-heron": ("Heron", 2),
}
CAL_WORDS = ["Ash", "Birch", "Cedar", "Elm", "Fir", "Oak"]  # by 4 h band of right ascension
# time-critical targets: (ra deg, dec deg, window start, window end, note)
CRITICAL = [
    (172.5, -48.0, "2027-04-19T02:00:00Z", "2027-04-19T04:30:00Z", "eclipse egress window"),
    (253.5, -15.0, "2027-04-19T06:15:00Z", "2027-04-19T08:00:00Z", "joint campaign slot"),
]
SCI_NOTES = ["", "", "suspected close companion", "variable; check recent brightness",
             "fast rotator", "dusty envelope", "repeat of an earlier epoch", "faint wide companion"]
CAL_NOTES = ["", "", "single star; stable", "check for a faint companion", "well measured size"]
COLUMNS = ["name", "ra", "dec", "kind", "program", "priority", "duration_min", "visits",
           "min_separation_min", "needs_calibrator", "mode", "mag_H", "mag_K", "mag_V",
           "diameter_mas", "diameter_err_mas", "limb_darkening", "ha_spread_h",
           "window_start_utc", "window_end_utc", "notes"]
#: the imaging target of the demo campaign (examples/demo_campaign.toml)
IMAGING = "Ember-04"
# observing modes of the fictional beam combiner (invented values)
MODES = [
    {"name": "near-ir-low", "wavelength_um": 1.65, "bandwidth_um": 0.30, "tracking_band": "H",
     "tracking_limit_mag": 7.5, "guiding_band": "V", "guiding_limit_mag": 12.0,
     "reference_seeing_arcsec": 0.8, "reference_coherence_ms": 4.0, "setup_s": 600.0},
    {"name": "near-ir-k", "wavelength_um": 2.2, "bandwidth_um": 0.40, "tracking_band": "K",
     "tracking_limit_mag": 7.0, "guiding_band": "V", "guiding_limit_mag": 11.5,
     "reference_seeing_arcsec": 0.8, "reference_coherence_ms": 4.0, "setup_s": 600.0},
]


def unit_vector(ha, dec, lat):
    """ENU unit vector to hour angle ha, declination dec at latitude lat (all radians)."""
    return np.stack([-np.cos(dec) * np.sin(ha),
                     np.cos(lat) * np.sin(dec) - np.sin(lat) * np.cos(dec) * np.cos(ha),
                     np.sin(lat) * np.sin(dec) + np.cos(lat) * np.cos(dec) * np.cos(ha)])


def feasible_fraction(config):
    """Sky-area fraction above MIN_ALT_DEG where the configuration is delay-feasible."""
    feeds, offsets = CONFIGS[config]
    ha, dec = np.meshgrid(np.radians(np.arange(-180.0, 180.0, 0.5)),
                          np.radians(np.arange(-89.75, 90.0, 0.5)))
    s = unit_vector(ha, dec, np.radians(LAT_DEG))
    # c_i = a_i + f_i - p_i.s ; K must lie in [max(opd_min_i + c_i), min(opd_max_i + c_i)]
    c = {line: STATIONS[st][3] + offsets.get(line, 0.0) - np.tensordot(STATIONS[st][:3], s, 1)
         for line, st in feeds.items()}
    lo = np.max([DELAY_LINES[line][0] + c[line] for line in feeds], axis=0)
    ok = lo <= np.min([DELAY_LINES[line][1] + c[line] for line in feeds], axis=0)
    up = s[2] >= np.sin(np.radians(MIN_ALT_DEG))
    w = np.cos(dec)  # equal-area weight of a grid cell
    return float((w * (ok & up)).sum() / (w * up).sum())


def max_baseline(config):
    pts = np.array([STATIONS[s][:2] for s in CONFIGS[config][0].values()])
    return float(np.linalg.norm(pts[:, None, :] - pts[None, :, :], axis=2).max())


def separation_deg(ra1, dec1, ra2, dec2):
    ra1, dec1, ra2, dec2 = map(np.radians, (ra1, dec1, ra2, dec2))
    c = np.sin(dec1) * np.sin(dec2) + np.cos(dec1) * np.cos(dec2) * np.cos(ra1 - ra2)
    return np.degrees(np.arccos(np.clip(c, -1.0, 1.0)))


def offset_point(ra, dec, dist, pa):
    """Point at angular distance dist and position angle pa (deg) from (ra, dec)."""
    ra, dec, dist, pa = map(np.radians, (ra, dec, dist, pa))
    d2 = np.arcsin(np.sin(dec) * np.cos(dist) + np.cos(dec) * np.sin(dist) * np.cos(pa))
    r2 = ra + np.arctan2(np.sin(pa) * np.sin(dist) * np.cos(dec),
                         np.cos(dist) - np.sin(dec) * np.sin(d2))
    return float(np.degrees(r2) % 360.0), float(np.degrees(d2))


def random_position(rng, ra_h, dec_deg):
    """Uniform in RA (range in hours, may wrap) and in declination (deg; more polar targets)."""
    span = (ra_h[1] - ra_h[0]) % 24.0
    return (ra_h[0] + span * rng.random()) % 24.0 * 15.0, float(rng.uniform(*dec_deg))


def sexagesimal(ra, dec):
    hh, rest = divmod(round(ra / 15.0 * 36000) % 864000, 36000)  # tenths of a time second
    mm, ds = divmod(rest, 600)
    a, sign = round(abs(dec) * 3600), "-" if dec < 0 else "+"
    dec_text = f"{sign}{a // 3600:02d}:{a // 60 % 60:02d}:{a % 60:02d}"
    return f"{hh:02d}:{mm:02d}:{ds / 10:04.1f}", dec_text


def make_science(rng):
    n = 11 * len(PROGRAMS)  # 11 targets per program
    tonight = np.zeros(n, bool)
    tonight[rng.choice(n, size=round(0.6 * n), replace=False)] = True
    rows = []
    for i in range(n):
        while True:  # RA 8h-20h is up on the demo night; the rest covers the other sky
            ra, dec = (random_position(rng, (8.0, 20.0), (-75.0, 15.0)) if tonight[i]
                       else random_position(rng, (20.0, 8.0), (-85.0, 25.0)))
            if all(separation_deg(ra, dec, r["ra"], r["dec"]) > 1.5 for r in rows):
                break
        code = list(PROGRAMS)[i % len(PROGRAMS)]
        rows.append(dict(ra=ra, dec=dec, kind="science", program=code,
                         priority=int(np.clip(PROGRAMS[code][1] + rng.integers(-1, 2), 1, 10)),
                         duration_min=int(5 * rng.integers(4, 13)), visits=1,
                         min_separation_min=0, needs_calibrator=True,
                         mag=round(rng.uniform(2.0, 7.0), 1),
                         diameter_mas=round(rng.uniform(0.5, 4.0), 2),
                         window_start_utc="", window_end_utc="", notes=str(rng.choice(SCI_NOTES))))
    # two time-critical targets (positions chosen so they are up during their windows)
    crit = rng.choice(np.flatnonzero(tonight), size=len(CRITICAL), replace=False)
    for k, (ra, dec, t0, t1, note) in zip(crit, CRITICAL, strict=True):
        rows[k].update(ra=ra, dec=dec, window_start_utc=t0, window_end_utc=t1, notes=note)
    # imaging targets: three visits spread over hour angle
    plain = [k for k in np.flatnonzero(tonight) if k not in crit and -60 < rows[k]["dec"] < -5]
    imaging = rng.choice(plain, size=4, replace=False)
    for k in imaging:
        rows[k].update(visits=3, min_separation_min=int(rng.choice([60, 75, 90])),
                       duration_min=int(5 * rng.integers(4, 9)),
                       notes="imaging: spread visits over hour angle")
    rest = [k for k in range(n) if k not in crit and k not in imaging]
    for k in rng.choice(rest, size=3, replace=False):
        rows[k].update(needs_calibrator=False, notes="self-calibrating measurement")
    # names: program stem + running number ordered by right ascension
    for code, (stem, _) in PROGRAMS.items():
        mine = sorted((r for r in rows if r["program"] == code), key=lambda r: r["ra"])
        for j, r in enumerate(mine, start=1):
            r["name"] = f"{stem}-{j:02d}"
    return sorted(rows, key=lambda r: (list(PROGRAMS).index(r["program"]), r["name"]))


def covered(sci, cals):
    return any(separation_deg(sci["ra"], sci["dec"], c["ra"], c["dec"]) <= 10.0
               and abs(sci["mag"] - c["mag"]) <= 1.5 for c in cals)


def make_calibrators(rng, science):
    cals = []

    def add_near(sci):
        while True:  # 3.5-8.5 deg from sci, inside the catalog's declination range, not crowded
            dist, pa = rng.uniform(3.5, 8.5), rng.uniform(0.0, 360.0)
            ra, dec = offset_point(sci["ra"], sci["dec"], dist, pa)
            if -85.0 <= dec <= 25.0 and all(
                    separation_deg(ra, dec, o["ra"], o["dec"]) > 2.0 for o in science + cals):
                break
        cals.append(dict(ra=ra, dec=dec, kind="calibrator", program="", priority=0,
                         duration_min=int(rng.choice([10, 12, 15])), visits=1,
                         min_separation_min=0, needs_calibrator=False,
                         mag=round(float(np.clip(sci["mag"] + rng.uniform(-1, 1), 1.5, 8.0)), 1),
                         diameter_mas=round(rng.uniform(0.1, 0.6), 2), window_start_utc="",
                         window_end_utc="", notes=str(rng.choice(CAL_NOTES))))

    needing = [s for s in science if s["needs_calibrator"]]
    for k in rng.permutation(len(needing)):
        if not covered(needing[k], cals):
            add_near(needing[k])
    cals.sort(key=lambda c: c["ra"])
    counts = dict.fromkeys(CAL_WORDS, 0)
    for c in cals:  # word for the 4 h band of right ascension, then a running number
        word = CAL_WORDS[int(c["ra"] // 60)]
        counts[word] += 1
        c["name"] = f"Cal-{word}-{counts[word]:02d}"
    return cals


# fixed delays that can be inserted on two of the lines (invented)
FIXED_DELAYS = {"rail-2": (0.0, 30.0, 60.0, 90.0), "rail-4": (0.0, 25.0, 50.0, 75.0)}


def write_array_toml(path):
    out = ["# FICTIONAL site and array, invented for the opdplan demo.",
           "# No real observatory, station or instrument is described here.",
           "# Regenerate with: python examples/make_demo_catalogs.py", "",
           "[site]", 'name = "Sablewind Plateau (fictional)"', f"latitude_deg = {LAT_DEG}",
           f"longitude_deg = {LON_DEG}  # east positive", f"height_m = {HEIGHT_M}", "",
           "[limits]", f"min_altitude_deg = {MIN_ALT_DEG}", "max_altitude_deg = 87.0",
           "sun_altitude_max_deg = -12.0", "moon_separation_min_deg = 15.0",
           "wind_speed_max_m_s = 12.0  # above it, no pointing within wind_halfwidth_deg",
           "wind_halfwidth_deg = 45.0  # of the azimuth the wind comes from", "",
           "[overheads]", "acquisition_s = 480.0", "slew_rate_deg_s = 1.5", "settle_s = 5.0"]
    for name, (e, n, u, a) in STATIONS.items():
        out += ["", "[[stations]]", f'name = "{name}"', f"east_m = {e}", f"north_m = {n}",
                f"up_m = {u}", f"internal_path_m = {a}"]
        if name in HORIZONS:
            pts = ", ".join(f"[{az}, {alt}]" for az, alt in HORIZONS[name])
            out.append(f"horizon = [{pts}]  # (azimuth deg, min altitude deg)")
    for name, (lo, hi, rate) in DELAY_LINES.items():
        out += ["", "[[delay_lines]]", f'name = "{name}"', f"opd_min_m = {lo}",
                f"opd_max_m = {hi}", f"max_rate_m_s = {rate}"]
    for mode in MODES:
        out += ["", "[[modes]]"] + [f"{k} = {v!r}".replace("'", '"') for k, v in mode.items()]
    for name, (feeds, offsets) in CONFIGS.items():
        out += ["", "[[configurations]]", f'name = "{name}"',
                "feeds = { " + ", ".join(f'"{k}" = "{v}"' for k, v in feeds.items()) + " }"]
        if offsets:
            out.append("fixed_offsets_m = { "
                       + ", ".join(f'"{k}" = {v}' for k, v in offsets.items()) + " }")
    out += ["", "# the set-up choices opdplan advise searches (fixed delays, optical path)"]
    for line, options in FIXED_DELAYS.items():
        out += ["", "[[fixed_delays]]", f'line = "{line}"',
                "options_m = [" + ", ".join(f"{v}" for v in options) + "]"]
    out += ["", "[routing]", "free = true  # any delay line may take any station"]
    path.write_text("\n".join(out) + "\n")


def write_targets_csv(path, rows, rng):
    sexa = set(rng.choice(len(rows), size=round(len(rows) / 4), replace=False).tolist())
    with path.open("w", newline="") as f:
        f.write("# FICTIONAL targets and calibrators, invented for the opdplan demo.\n"
                "# Regenerate with: python examples/make_demo_catalogs.py\n")
        w = csv.DictWriter(f, fieldnames=COLUMNS, lineterminator="\n", extrasaction="ignore")
        w.writeheader()
        for i, r in enumerate(rows):
            r = dict(r, needs_calibrator=str(r["needs_calibrator"]).lower())
            if i in sexa:
                r["ra"], r["dec"] = sexagesimal(r["ra"], r["dec"])
            else:
                r["ra"], r["dec"] = f"{r['ra']:.4f}", f"{r['dec']:.4f}"
            w.writerow(r)
    return len(sexa)


def add_photometry(science, cals):
    """Modes, per-band magnitudes, diameter errors and limb darkening, drawn from a second
    generator so that everything drawn before stays as it was.  A fifth of the science
    targets use the K mode and get calibrators of their own; a few are too faint for
    fringe tracking or for guiding (to show the reasons), and a third of the others are
    near the guiding limit, so that worse seeing takes them out."""
    rng = np.random.default_rng(2028)
    for r in science + cals:
        r.update(mode="near-ir-low", mag_H=r["mag"], diameter_err_mas="", limb_darkening="",
                 mag_K=round(r["mag"] - rng.uniform(0.1, 0.8), 1),
                 mag_V=round(r["mag"] + rng.uniform(0.5, 3.5), 1))  # fmt: skip
    for c in cals:
        c["diameter_err_mas"] = round(c["diameter_mas"] * rng.uniform(0.03, 0.06), 3)
    needing = [s for s in science if s["needs_calibrator"] and not s["window_start_utc"]]
    k_mode = [needing[k] for k in rng.choice(len(needing), size=len(needing) // 5, replace=False)]
    extra = []
    for s in k_mode:
        s["mode"] = "near-ir-k"
        dist, pa = rng.uniform(3.0, 7.0), rng.uniform(0.0, 360.0)
        ra, dec = offset_point(s["ra"], s["dec"], dist, pa)
        mag = round(float(s["mag"] + rng.uniform(-0.8, 0.8)), 1)
        extra.append(dict(ra=ra, dec=dec, kind="calibrator", program="", priority=0,
                          duration_min=int(rng.choice([10, 12])), visits=1,
                          min_separation_min=0, needs_calibrator=False, mode="near-ir-k",
                          mag=mag, mag_H=mag, mag_K=round(mag - rng.uniform(0.1, 0.6), 1),
                          mag_V=round(mag + rng.uniform(0.5, 2.5), 1),
                          diameter_mas=round(rng.uniform(0.1, 0.3), 2), diameter_err_mas=0.01,
                          limb_darkening="", window_start_utc="", window_end_utc="",
                          notes="calibrator for the K mode"))  # fmt: skip
    for s in rng.choice(science, size=6, replace=False):
        s["limb_darkening"] = round(rng.uniform(0.2, 0.5), 2)
    plain = [s for s in science if s["mode"] == "near-ir-low" and not s["window_start_utc"]]
    faint = rng.choice(len(plain), size=5, replace=False)
    for k in faint[:3]:  # too faint for the fringe tracker in the H mode
        plain[k].update(mag_H=round(rng.uniform(7.8, 8.6), 1), notes="faint; check the limit")
        plain[k]["mag"] = plain[k]["mag_H"]
    for k in faint[3:]:  # too faint for guiding
        plain[k].update(mag_V=round(rng.uniform(12.4, 13.0), 1), notes="red; faint in V")
    for j, c in enumerate(sorted(extra, key=lambda c: c["ra"]), start=1):
        c["name"] = f"Cal-Kay-{j:02d}"
    marginal = [k for k in range(len(plain)) if k not in set(faint.tolist())]
    for k in rng.choice(marginal, size=len(marginal) // 3, replace=False):
        # bright enough for guiding in the reference seeing, not in a much worse one
        plain[k].update(mag_V=round(rng.uniform(11.2, 11.9), 1), notes="marginal in V")
    return extra


def main():
    rng = np.random.default_rng(2027)
    science = make_science(rng)
    cals = make_calibrators(rng, science)
    assert len(cals) >= 44 and all(covered(s, cals) for s in science if s["needs_calibrator"])
    cals = cals + add_photometry(science, cals)
    for r in science:  # the demo's imaging target: visits spread over hour angle
        if r["name"] == IMAGING:
            r.update(ha_spread_h=1.5, notes="imaging; see examples/demo_campaign.toml")
    OUT.mkdir(exist_ok=True)
    write_array_toml(OUT / "demo_array.toml")
    n_sexa = write_targets_csv(OUT / "demo_targets.csv", science + cals, rng)
    for name in CONFIGS:
        print(f"{name:8s} max baseline {max_baseline(name):6.1f} m   "
              f"delay-feasible above {MIN_ALT_DEG:.0f} deg: {feasible_fraction(name):6.1%}")
    print(f"{len(science)} science ({sum(120 <= s['ra'] < 300 for s in science)} at RA 8h-20h),"
          f" {len(cals)} calibrators, {n_sexa} rows sexagesimal -> {OUT}")


if __name__ == "__main__":
    main()
