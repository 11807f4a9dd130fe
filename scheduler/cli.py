"""The ``opdplan`` command line.

Parses arguments, calls one command module, prints its view or JSON.  Bad input of any
kind ends with one line per problem on standard error and exit status 2, never a
traceback and never a partial output file.
"""

from __future__ import annotations

import argparse
import sys
import time

from scheduler.errors import InputError, Problem

DEMO_NIGHT = "2027-04-18"
DEMO_CONFIG = "medium"
DEMO_TIME_LIMIT_S = 15.0


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="opdplan",
        description="Plan nights at a long-baseline optical interferometer (advisory).",
    )
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")

    def common(sp, targets=True):
        sp.add_argument("--array", required=True, help="array file (TOML)")
        sp.add_argument("--config", required=True, help="configuration name in the array file")
        if targets:
            sp.add_argument("--targets", required=True, help="target catalog (CSV, ECSV, VOTable)")
        sp.add_argument("--night", required=True, help="local date of the evening, YYYY-MM-DD")
        sp.add_argument("--json", action="store_true", help="print JSON instead of the view")

    w = sub.add_parser("windows", help="observable windows of every target tonight")
    common(w)

    d = sub.add_parser("delays", help="carriage positions through the night for one target")
    common(d, targets=False)
    d.add_argument("--ra", help="right ascension (ICRS): degrees or hh:mm:ss.s")
    d.add_argument("--dec", help="declination (ICRS): degrees or +dd:mm:ss")
    d.add_argument("--target", help="target name in --targets")
    d.add_argument("--targets", help="target catalog, with --target")
    d.add_argument("--step-min", type=float, default=10.0, help="sample spacing (minutes)")

    pl = sub.add_parser("plan", help="tonight's queue, verified independently")
    common(pl)
    pl.add_argument("--time-limit", type=float, default=20.0, help="seconds for the optimiser")
    pl.add_argument("--seed", type=int, default=0)
    pl.add_argument("--deterministic", action="store_true", help="same plan for the same seed")
    pl.add_argument("--solver", choices=("optimize", "greedy"), default="optimize")
    pl.add_argument("--out", help="write the plan (JSON, schema opdplan-plan/1) here")
    pl.add_argument("--csv", help="write the visits as CSV here")
    pl.add_argument("--votable", help="write the visits as an IVOA VOTable (ObsLocTAP names)")
    pl.add_argument("--plot", help="write a PNG of altitudes and carriage paths (plots extra)")

    v = sub.add_parser("verify", help="check a plan file against the array and catalog")
    v.add_argument("plan")
    v.add_argument("--array", required=True)
    v.add_argument("--targets", required=True)

    rp = sub.add_parser("replan", help="the rest of the night from the current state")
    rp.add_argument("--plan", required=True, help="the plan made earlier (JSON)")
    rp.add_argument("--log", required=True, help="the night log (JSON Lines)")
    rp.add_argument("--now", required=True, help="the time to replan from, ISO 8601 UTC")
    rp.add_argument("--out", help="write the new plan here (never over --plan without --overwrite)")
    rp.add_argument("--overwrite", action="store_true", help="allow --out to replace --plan")
    rp.add_argument("--array", help="array file, if not the one the plan was made from")
    rp.add_argument("--targets", help="catalog, if not the one the plan was made from")
    rp.add_argument("--time-limit", type=float, default=3.0, help="seconds for the optimiser")
    rp.add_argument("--seed", type=int, default=0)
    rp.add_argument("--deterministic", action="store_true")
    rp.add_argument("--solver", choices=("optimize", "greedy"), default="optimize")
    rp.add_argument("--json", action="store_true", help="print JSON instead of the view")

    lg = sub.add_parser("log", help="append what happened to the night log")
    events = lg.add_subparsers(dest="event", required=True, metavar="EVENT")
    for name, text in (("done", "a visit was completed"), ("aborted", "a visit was aborted")):
        e = events.add_parser(name, help=text)
        e.add_argument("--log", required=True)
        e.add_argument("--visit", required=True, help="visit id from the plan")
        e.add_argument("--at", help="when (ISO 8601 UTC; default now)")
    e = events.add_parser("closed", help="domes closed from one time to another")
    e.add_argument("--log", required=True)
    e.add_argument("--from", dest="from_", required=True)
    e.add_argument("--to", required=True)
    for name, text in (("out", "a station or delay line is out"), ("back", "it is back")):
        e = events.add_parser(name, help=text)
        e.add_argument("--log", required=True)
        which = e.add_mutually_exclusive_group(required=True)
        which.add_argument("--station")
        which.add_argument("--delay-line")
        e.add_argument("--at")
    e = events.add_parser("carriages", help="where the carriages are")
    e.add_argument("--log", required=True)
    e.add_argument("--at", required=True)
    e.add_argument("--opd", nargs="+", required=True, metavar="LINE=METRES")

    ft = sub.add_parser("fit", help="will the proposals fit the semester?")
    ft.add_argument("--semester", required=True, help="semester file (TOML)")
    ft.add_argument("--array", required=True)
    ft.add_argument("--targets", required=True)
    ft.add_argument("--proposals", required=True, help="proposals (CSV)")
    ft.add_argument("--simulate", type=int, default=0, metavar="N", help="weather realisations")
    ft.add_argument("--seed", type=int, default=0)
    ft.add_argument("--cluster", help="address of a Dask scheduler (cluster extra)")
    ft.add_argument("--plot", help="write a PNG of the pressure by right ascension")
    ft.add_argument("--json", action="store_true")

    sub.add_parser("demo", help="run the fictional demo scenario end to end")
    return p


def _windows(args, console):
    from scheduler.commands import windows_cmd
    from scheduler.commands.common import load_inputs

    inputs = load_inputs(args.array, args.config, args.targets, args.night)
    return windows_cmd.run(inputs, args.json)


def _delays(args, console):
    from scheduler.catalog import load_targets
    from scheduler.commands import delays_cmd
    from scheduler.commands.common import load_inputs

    if args.target is not None:
        if args.targets is None:
            raise InputError(Problem("--target", "", "needs --targets FILE to look the name up"))
        targets = load_targets(args.targets)
        try:
            index = targets.index(args.target)
        except KeyError as exc:
            raise InputError(Problem("--target", "", exc.args[0])) from None
    elif args.ra is not None and args.dec is not None:
        targets, index = delays_cmd.coordinate_target(args.ra, args.dec), 0
    else:
        raise InputError(Problem("delays", "", "give --ra and --dec, or --target with --targets"))
    if not 0.0 < args.step_min <= 240.0:
        raise InputError(Problem("--step-min", "", f"{args.step_min} is not in (0, 240]"))
    inputs = load_inputs(args.array, args.config, targets, args.night)
    return delays_cmd.run(inputs, index, args.step_min * 60.0, args.json)


def _demo(args, console):
    from scheduler.commands import plan_cmd
    from scheduler.commands.common import demo_file, load_inputs
    from scheduler.plan_model import PlanSettings

    console.print(
        "[bold]opdplan demo[/bold]: a fictional site and array (catalogs/demo_array.toml) "
        f"and catalog (catalogs/demo_targets.csv); the queue for the night of {DEMO_NIGHT} "
        f"in configuration {DEMO_CONFIG}, optimised for up to {DEMO_TIME_LIMIT_S:.0f} s and "
        "checked by the independent verifier. See `opdplan windows` for every target's windows."
    )
    inputs = load_inputs(
        demo_file("demo_array.toml"), DEMO_CONFIG, demo_file("demo_targets.csv"), DEMO_NIGHT
    )
    settings = PlanSettings(time_limit_s=DEMO_TIME_LIMIT_S)
    return plan_cmd.run(inputs, settings, "optimize", plan_cmd.Outputs(), False, args.started_s)


def _plan(args, console):
    from scheduler.commands import plan_cmd
    from scheduler.commands.common import load_inputs
    from scheduler.plan_model import PlanSettings

    if not 1.0 <= args.time_limit <= 3600.0:
        raise InputError(Problem("--time-limit", "", f"{args.time_limit} is not in [1, 3600] s"))
    settings = PlanSettings(time_limit_s=args.time_limit, seed=args.seed,
                            deterministic=args.deterministic)  # fmt: skip
    inputs = load_inputs(args.array, args.config, args.targets, args.night)
    outputs = plan_cmd.Outputs(args.out, args.csv, args.votable, args.plot)
    return plan_cmd.run(inputs, settings, args.solver, outputs, args.json, args.started_s)


def _verify(args, console):
    from scheduler.commands import plan_cmd

    result = plan_cmd.verify_file(args.plan, args.array, args.targets)
    args.exit_code = 0 if result["valid"] else 1
    return result


def _replan(args, console):
    from scheduler.commands import replan_cmd
    from scheduler.plan_model import PlanSettings

    if not 1.0 <= args.time_limit <= 3600.0:
        raise InputError(Problem("--time-limit", "", f"{args.time_limit} is not in [1, 3600] s"))
    settings = PlanSettings(time_limit_s=args.time_limit, seed=args.seed,
                            deterministic=args.deterministic)  # fmt: skip
    return replan_cmd.run(args, settings, args.started_s)


def _fit(args, console):
    from scheduler.commands import fit_cmd

    if args.simulate < 0:
        raise InputError(Problem("--simulate", "", f"{args.simulate} is negative"))
    return fit_cmd.run(args, console)


def _log(args, console):
    from scheduler.commands import replan_cmd

    return {"logged": replan_cmd.log(args), "log": args.log}


COMMANDS = {
    "windows": _windows, "delays": _delays, "plan": _plan, "verify": _verify,
    "replan": _replan, "log": _log, "fit": _fit, "demo": _demo,
}  # fmt: skip


def main(argv: list[str] | None = None) -> int:
    started = time.perf_counter()
    args = _parser().parse_args(argv)
    args.started_s = started
    from rich.console import Console

    from scheduler.commands.common import print_json
    from scheduler.views.caution import Caution

    console = Console()
    try:
        result = COMMANDS[args.command](args, console)
    except InputError as exc:
        for problem in exc.problems:
            print(f"opdplan: error: {problem}", file=sys.stderr)
        return 2
    except RuntimeError as exc:  # a plan the verifier rejects is a bug: say so, write nothing
        print(f"opdplan: internal error (please report): {exc}", file=sys.stderr)
        return 3
    except KeyboardInterrupt:
        print("opdplan: interrupted", file=sys.stderr)
        return 130
    if isinstance(result, dict):
        print_json(result)
    else:
        for part in result if isinstance(result, list) else [result]:
            console.print(part)
        console.print(Caution())
    return getattr(args, "exit_code", 0)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
