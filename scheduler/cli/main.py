"""The ``opdplan`` command line.

Parses arguments, runs one command, prints its view or JSON, then writes its files (all
or none).  Bad input of any kind ends with one line per problem on standard error and
exit status 2, never a traceback and never an output file; Ctrl-C ends with 130 and no
new file; a plan the verifier rejects is a bug (3).
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import time
from collections.abc import Callable
from typing import Any

from scheduler import __version__
from scheduler.cli.parser import build_parser
from scheduler.model.errors import InputError


def _command(name: str) -> Callable[..., Any]:
    """The ``run`` function of a command (imported only when used)."""
    from scheduler.cli.commands import (
        advise,
        campaign,
        delays,
        fit,
        log,
        plan,
        replan,
        uv,
        verify,
        windows,
    )

    table: dict[str, Callable[..., Any]] = {
        "windows": windows.run, "delays": delays.run, "plan": plan.run, "demo": plan.demo,
        "verify": verify.run, "replan": replan.run, "log": log.run, "fit": fit.run,
        "uv": uv.run, "campaign": campaign.run, "advise": advise.run,
    }  # fmt: skip
    return table[name]


def _show(result: Any, console: Any) -> None:
    from scheduler.cli.commands.common import warn
    from scheduler.views.caution import Caution

    for message in result.warnings:
        warn(message)
    if result.json is not None:
        print(json.dumps(result.json, indent=2, allow_nan=False))
        return
    for part in result.view:
        console.print(part)
    if result.caution:
        console.print(Caution())


def _run(args: argparse.Namespace, started: float) -> int:
    from rich.console import Console

    from scheduler.output.files import write_all

    console = Console()
    run = _command(args.command)
    result = run(args, started, console)
    _show(result, console)
    try:
        write_all(result.outputs)
    except OSError as exc:
        print(f"opdplan: error: cannot write {exc.filename or ''}: {exc.strerror or exc}; "
              "no output file was written", file=sys.stderr)  # fmt: skip
        return 1
    return int(result.exit_code)


def process_age_s() -> float:
    """Seconds since this process started (Linux /proc; 0 where unknown), so that a
    time limit counts from the command's start, interpreter start-up included."""
    try:
        with open("/proc/self/stat", encoding="ascii") as f:
            ticks = float(f.read().rsplit(")", 1)[1].split()[19])
        with open("/proc/uptime", encoding="ascii") as f:
            uptime = float(f.read().split()[0])
        return max(0.0, uptime - ticks / os.sysconf("SC_CLK_TCK"))
    except (OSError, ValueError, IndexError):
        return 0.0


def main(argv: list[str] | None = None, started: float | None = None) -> int:
    """Run one command; ``started`` (``time.perf_counter()``) is when it began, by
    default now (the console script passes the process start)."""
    started = time.perf_counter() if started is None else started
    try:
        args = build_parser(__version__).parse_args(argv)
        return _run(args, started)
    except InputError as exc:
        for problem in exc.problems:
            print(f"opdplan: error: {problem}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("opdplan: interrupted; nothing was written", file=sys.stderr)
        return 130
    except Exception as exc:
        if _interrupted(exc):  # e.g. Ctrl-C while a compiled module initialises
            print("opdplan: interrupted; nothing was written", file=sys.stderr)
            return 130
        if isinstance(exc, RuntimeError):  # a plan the verifier rejects is a bug
            print(f"opdplan: internal error (please report): {exc}", file=sys.stderr)
            return 3
        raise


def _interrupted(exc: BaseException) -> bool:
    """Whether a KeyboardInterrupt caused ``exc`` (some extension modules turn a
    Ctrl-C during their import into an ImportError chained to it)."""
    seen: set[int] = set()
    cause: BaseException | None = exc
    while cause is not None and id(cause) not in seen:
        if isinstance(cause, KeyboardInterrupt):
            return True
        seen.add(id(cause))
        cause = cause.__cause__ or cause.__context__
    return False


def entry() -> None:  # pragma: no cover - the console script
    sys.exit(main(started=time.perf_counter() - process_age_s()))
