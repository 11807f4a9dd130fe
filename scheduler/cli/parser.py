"""The argument parser: every option with one line of help, its default and unit, and
one example at the end of each command's help."""

from __future__ import annotations

import argparse

DEMO = "--array catalogs/demo_array.toml --config medium --targets catalogs/demo_targets.csv"


class _Help(argparse.RawDescriptionHelpFormatter):
    """Each option's default after its help, unless the help states it already or there
    is none to state (a flag that is off, an option that is simply not used when
    absent); the example kept as written."""

    def _get_help_string(self, action: argparse.Action) -> str | None:
        text = action.help or ""
        default = action.default
        if ("default" in text or action.required or default is None or default is False
                or default is argparse.SUPPRESS):  # fmt: skip
            return text
        return f"{text} (default: %(default)s)"


def _sub(sub: argparse._SubParsersAction, name: str, text: str,
         example: str) -> argparse.ArgumentParser:  # fmt: skip
    return sub.add_parser(name, help=text, description=text, formatter_class=_Help,
                          epilog=f"example:\n  opdplan {name} {example}")  # fmt: skip


def _night_options(sp: argparse.ArgumentParser, targets: bool = True) -> None:
    sp.add_argument("--array", required=True, help="array file (TOML)")
    sp.add_argument("--config", required=True, help="configuration name in the array file")
    if targets:
        sp.add_argument("--targets", required=True, help="target catalog (CSV, ECSV, VOTable)")
    sp.add_argument("--night", required=True,
                    help="local date of the night's evening, YYYY-MM-DD")  # fmt: skip
    sp.add_argument("--json", action="store_true", help="print JSON instead of the view")


def _solver_options(sp: argparse.ArgumentParser, limit_s: float) -> None:
    sp.add_argument("--time-limit", type=float, default=limit_s, metavar="S",
                    help="seconds for the whole command, counted from its start")  # fmt: skip
    sp.add_argument("--seed", type=int, default=0, help="random seed of the optimiser")
    sp.add_argument("--deterministic", action="store_true",
                    help="one optimiser worker under a deterministic limit: same plan "
                    "for the same inputs and seed")  # fmt: skip
    sp.add_argument("--solver", choices=("optimize", "greedy"), default="optimize",
                    help="optimize: search and proven bounds from the greedy night; greedy: "
                    "by hand")  # fmt: skip
    sp.add_argument("--quiet", action="store_true",
                    help="no live line of the best value and bound while optimising")
    value_options(sp)


def value_options(sp: argparse.ArgumentParser) -> None:
    """The value rule (README.md, *Value rule*)."""
    sp.add_argument("--value-per-hour", action="store_true",
                    help="a science visit earns priority x hours (default: its priority)")
    sp.add_argument("--strict-priority", action="store_true",
                    help="a higher priority wins over any amount of lower ones")


def condition_options(sp: argparse.ArgumentParser) -> None:
    """Tonight's conditions (defaults: each mode's reference; no wind)."""
    sp.add_argument("--seeing", type=float, metavar="ARCSEC",
                    help="seeing, arcsec (default: each mode's reference)")
    sp.add_argument("--coherence-ms", type=float, metavar="MS",
                    help="atmospheric coherence time tau0, ms (default: each mode's reference)")
    sp.add_argument("--wind-speed", type=float, metavar="M_S", help="wind speed, m/s")
    sp.add_argument("--wind-from", type=float, metavar="DEG",
                    help="azimuth the wind comes from, deg (north through east)")


def _plan_commands(sub: argparse._SubParsersAction) -> None:
    pl = _sub(sub, "plan", "tonight's queue, verified independently",
              f"{DEMO} --night 2027-04-18 --out plan.json")  # fmt: skip
    _night_options(pl)
    _solver_options(pl, 20.0)
    condition_options(pl)
    pl.add_argument("--campaign", help="campaign file (TOML): visits wanted per configuration")
    pl.add_argument("--campaign-log", metavar="DIR",
                    help="folder of the night logs that count towards --campaign")
    pl.add_argument("--out", help="write the plan here (JSON, schema opdplan-plan/1)")
    pl.add_argument("--csv", help="write the visits here as CSV")
    pl.add_argument("--votable", help="write the visits here as an IVOA VOTable")
    pl.add_argument("--plot", help="write a PNG of altitudes and carriage paths (plots extra)")
    v = _sub(sub, "verify", "check a plan file against the array, catalog and rules",
             "plan.json --array catalogs/demo_array.toml --targets catalogs/demo_targets.csv")
    v.add_argument("plan", help="the plan file (JSON)")
    v.add_argument("--array", required=True, help="array file (TOML)")
    v.add_argument("--targets", required=True, help="target catalog")
    value_options(v)
    v.add_argument("--seeing", type=float, metavar="ARCSEC", help="seeing observed, arcsec")
    v.add_argument("--coherence-ms", type=float, metavar="MS", help="coherence time tau0, ms")
    v.add_argument("--wind-speed", type=float, metavar="M_S", help="wind speed, m/s")
    v.add_argument("--wind-from", type=float, metavar="DEG", help="wind from azimuth, deg N to E")
    rp = _sub(sub, "replan", "the rest of the night from the current state",
              "--plan plan.json --log night.jsonl --now 2027-04-19T00:45:00Z --out new.json")
    rp.add_argument("--plan", required=True, help="the plan made earlier (JSON)")
    rp.add_argument("--log", required=True, help="the night log (JSON Lines)")
    rp.add_argument("--now", required=True, help="the time to replan from, ISO 8601 UTC")
    rp.add_argument("--out", help="write the new plan here (never over --plan, see --overwrite)")
    rp.add_argument("--overwrite", action="store_true", help="allow --out to replace --plan")
    rp.add_argument("--array", help="array file, if not the one the plan was made from")
    rp.add_argument("--targets", help="catalog, if not the one the plan was made from")
    rp.add_argument("--json", action="store_true", help="print JSON instead of the view")
    _solver_options(rp, 3.0)


def _log_command(sub: argparse._SubParsersAction) -> None:
    lg = _sub(sub, "log", "append what happened to the night log",
              "done --log night.jsonl --plan plan.json --visit Tide-05#1")  # fmt: skip
    events = lg.add_subparsers(dest="event", required=True, metavar="EVENT")

    def event(name: str, text: str, example: str) -> argparse.ArgumentParser:
        e = events.add_parser(name, help=text, description=text, formatter_class=_Help,
                              epilog=f"example:\n  opdplan log {name} --log night.jsonl "
                              f"--plan plan.json {example}")  # fmt: skip
        e.add_argument("--log", required=True, help="the night log (JSON Lines; appended)")
        e.add_argument("--plan", required=True, help="the plan being flown (JSON)")
        return e

    for name, text in (("done", "a visit was completed"), ("aborted", "a visit was aborted")):
        e = event(name, text, "--visit Tide-05#1 --at 2027-04-18T23:25:00Z")
        e.add_argument("--visit", required=True, help="visit id from the plan")
        e.add_argument("--at", help="when, ISO 8601 UTC (default: now)")
    e = event("closed", "domes closed from one time to another",
              "--from 2027-04-18T23:30:00Z --to 2027-04-19T01:00:00Z")  # fmt: skip
    e.add_argument("--from", dest="from_", required=True, help="closed from, ISO 8601 UTC")
    e.add_argument("--to", required=True, help="closed until, ISO 8601 UTC")
    for name, text in (("out", "a station or delay line is out"), ("back", "it is back")):
        e = event(name, text, "--station jasper")
        which = e.add_mutually_exclusive_group(required=True)
        which.add_argument("--station", help="station name")
        which.add_argument("--delay-line", help="delay line name")
        e.add_argument("--at", help="when, ISO 8601 UTC (default: now)")
    e = event("conditions", "the seeing, coherence time and wind from now on",
              "--seeing 1.2 --coherence-ms 2.5 --wind-speed 14 --wind-from 300")  # fmt: skip
    e.add_argument("--seeing", dest="seeing_arcsec", type=float, metavar="ARCSEC",
                   help="seeing, arcsec")
    e.add_argument("--coherence-ms", dest="coherence_ms", type=float, metavar="MS",
                   help="atmospheric coherence time tau0, ms")
    e.add_argument("--wind-speed", dest="wind_speed_m_s", type=float, metavar="M_S",
                   help="wind speed, m/s")
    e.add_argument("--wind-from", dest="wind_from_deg", type=float, metavar="DEG",
                   help="azimuth the wind comes from, deg")
    e.add_argument("--at", help="when, ISO 8601 UTC (default: now)")
    e = event("carriages", "where the carriages are", "--at 2027-04-19T00:59:00Z --opd rail-1=60")
    e.add_argument("--at", required=True, help="when, ISO 8601 UTC")
    e.add_argument("--opd", nargs="+", required=True, metavar="LINE=METRES",
                   help="optical path of each delay line, metres")  # fmt: skip


def _other_commands(sub: argparse._SubParsersAction) -> None:
    w = _sub(sub, "windows", "when each target is observable tonight, and why not",
             f"{DEMO} --night 2027-04-18")  # fmt: skip
    _night_options(w)
    d = _sub(sub, "delays", "carriage positions through the night for one position",
             "--array catalogs/demo_array.toml --config long --ra 14:30:00 --dec -40 "
             "--night 2027-04-18")  # fmt: skip
    _night_options(d, targets=False)
    d.add_argument("--ra", help="right ascension (ICRS): degrees or hh:mm:ss.s")
    d.add_argument("--dec", help="declination (ICRS): degrees or +dd:mm:ss")
    d.add_argument("--target", help="target name in --targets (instead of --ra/--dec)")
    d.add_argument("--targets", help="target catalog, with --target")
    d.add_argument("--step-min", type=float, default=10.0, metavar="MIN",
                   help="sample spacing, minutes")  # fmt: skip
    d.add_argument("--force", action="store_true",
                   help="accept an output of more than 5,000 samples")
    uv = _sub(sub, "uv", "(u, v) tracks and coverage of a target or of a plan's targets",
              "--array catalogs/demo_array.toml --config long --targets "
              "catalogs/demo_targets.csv --night 2027-04-18 --target Heron-05")  # fmt: skip
    uv.add_argument("--target", help="target name in --targets: tracks over its windows")
    uv.add_argument("--plan", help="plan file: tracks of every science target over its visits")
    uv.add_argument("--array", help="array file (default with --plan: the plan's)")
    uv.add_argument("--config", help="configuration (with --target)")
    uv.add_argument("--targets", help="target catalog (default with --plan: the plan's)")
    uv.add_argument("--night", help="local date of the night's evening (with --target)")
    uv.add_argument("--step-min", type=float, default=5.0, help="sample spacing, minutes")
    uv.add_argument("--fill-radius-m", type=float, metavar="M",
                    help="distance within which a sample fills the (u, v) plane "
                    "(default: a tenth of the longest baseline)")  # fmt: skip
    uv.add_argument("--plot", help="write a PNG of the (u, v) plane")
    uv.add_argument("--json", action="store_true", help="print JSON instead of the view")
    cp = _sub(sub, "campaign", "what an imaging campaign has done and what is left",
              "--campaign examples/demo_campaign.toml --log logs --array "
              "catalogs/demo_array.toml --targets catalogs/demo_targets.csv")  # fmt: skip
    cp.add_argument("--campaign", required=True, help="campaign file (TOML)")
    cp.add_argument("--log", required=True, metavar="DIR",
                    help="folder of night logs (*.jsonl) written by opdplan log")
    cp.add_argument("--array", required=True, help="array file (TOML)")
    cp.add_argument("--targets", required=True, help="target catalog")
    cp.add_argument("--json", action="store_true", help="print JSON instead of the view")
    ft = _sub(sub, "fit", "will the proposals fit the semester?",
              "--semester examples/demo_semester.toml --array catalogs/demo_array.toml "
              "--targets catalogs/demo_targets.csv --proposals examples/demo_proposals.csv")
    ft.add_argument("--semester", required=True, help="semester file (TOML)")
    ft.add_argument("--array", required=True, help="array file (TOML)")
    ft.add_argument("--targets", required=True, help="target catalog")
    ft.add_argument("--proposals", required=True, help="proposals (CSV)")
    ft.add_argument("--simulate", type=int, default=100, metavar="N",
                    help="weather realisations of the semester (default 100: odds to "
                    "within 5 points of standard error)")  # fmt: skip
    ft.add_argument("--seed", type=int, default=0, help="random seed of the realisations")
    ft.add_argument("--workers", type=int, metavar="N",
                    help="local processes (default: one per core; 1: this process only)")
    ft.add_argument("--cluster", help="address of a running Dask scheduler (cluster extra)")
    ft.add_argument("--plot", help="write a PNG of the pressure per configuration and LST")
    ft.add_argument("--json", action="store_true", help="print JSON instead of the view")
    _advise_command(sub)
    _sub(sub, "demo", "plan the fictional demo night end to end", "")


def _advise_command(sub: argparse._SubParsersAction) -> None:
    ad = _sub(sub, "advise", "which configuration, routing and fixed delays serve the pool "
              "best tonight", "--array catalogs/demo_array.toml --targets "
              "catalogs/demo_targets.csv --night 2027-04-18 --plot maps")  # fmt: skip
    ad.add_argument("--array", required=True, help="array file (TOML)")
    ad.add_argument("--targets", required=True, help="target catalog (CSV, ECSV, VOTable)")
    ad.add_argument("--night", required=True, help="local date of the night's evening, "
                    "YYYY-MM-DD")  # fmt: skip
    ad.add_argument("--configs", metavar="A,B", help="configurations to consider, "
                    "comma-separated (default: all of the array file)")  # fmt: skip
    ad.add_argument("--top", type=int, default=5, metavar="N",
                    help="choices to plan besides each configuration's best and tonight's")
    ad.add_argument("--step-min", type=float, default=5.0, metavar="MIN",
                    help="time step of the ranking's observable hours, minutes")
    ad.add_argument("--solver", choices=("greedy", "optimize"), default="greedy",
                    help="queue for the planned value of each choice")
    ad.add_argument("--time-limit", type=float, default=5.0, metavar="S",
                    help="seconds per planned choice with --solver optimize")
    ad.add_argument("--seed", type=int, default=0, help="random seed (search, optimiser)")
    ad.add_argument("--plot", metavar="DIR", help="write a map of the reachable sky per "
                    "planned choice into this existing folder (PNG and JSON)")  # fmt: skip
    ad.add_argument("--json", action="store_true", help="print JSON instead of the view")


def build_parser(version: str) -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="opdplan",
        description="Plan nights at a long-baseline optical interferometer (advisory: every "
        "motion follows the site's interlocks and procedures).",
    )
    p.add_argument("--version", action="version", version=f"opdplan {version}")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    _other_commands(sub)
    _plan_commands(sub)
    _log_command(sub)
    return p
