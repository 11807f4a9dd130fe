"""What a new user meets first: the version, help for every option with its default,
an example ending each command's help, conflicting options refused, outputs too large
to be wanted asking for --force, the summary's figures defined, and unscheduled
targets grouped by reason alone.  (Facts of the trade for command-line tools: common
practice, no source.)"""

from __future__ import annotations

import argparse
import json
import re
from pathlib import Path

import pytest

from scheduler.cli.main import main
from scheduler.cli.parser import build_parser

ROOT = Path(__file__).resolve().parent.parent
ARRAY = str(ROOT / "catalogs" / "demo_array.toml")
TARGETS = str(ROOT / "catalogs" / "demo_targets.csv")


def _parsers() -> list[tuple[str, argparse.ArgumentParser]]:
    top = build_parser("0")
    out = []
    stack = [("opdplan", top)]
    while stack:
        name, p = stack.pop()
        out.append((name, p))
        for action in p._actions:
            if isinstance(action, argparse._SubParsersAction):
                stack += [(f"{name} {n}", sub) for n, sub in action.choices.items()]
    return out


def test_a_seed_of_zero_shows_its_default():
    sub = dict(_parsers())["opdplan plan"]
    assert re.search(r"--seed SEED\s+random seed of the optimiser \(default: 0\)",
                     sub.format_help())


def test_version(capsys):
    with pytest.raises(SystemExit) as info:
        main(["--version"])
    assert info.value.code == 0
    assert re.fullmatch(r"opdplan \d+\.\d+\.\d+\n", capsys.readouterr().out)


@pytest.mark.parametrize("name,parser", _parsers(), ids=lambda x: x if isinstance(x, str) else "")
def test_every_option_has_help_and_each_command_an_example(name, parser):
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction | argparse._HelpAction):
            continue
        assert action.help and action.help.strip(), f"{name} {action.option_strings}"
    text = parser.format_help()
    assert "(default: None)" not in text and "(default: False)" not in text
    leaf = not any(isinstance(a, argparse._SubParsersAction) for a in parser._actions)
    if leaf and name != "opdplan demo":
        assert re.search(r"example:\n  opdplan \S", text), name
    for action in parser._actions:  # a default worth stating is stated once
        if action.option_strings and not any(action.default is x for x in (None, False,
                                                                            argparse.SUPPRESS)):
            if not isinstance(action, argparse._HelpAction | argparse._VersionAction):
                assert "default" in parser._get_formatter()._get_help_string(action)


def test_target_and_coordinates_together_are_refused(capsys):
    code = main(["delays", "--array", ARRAY, "--config", "long", "--night", "2027-04-18",
                 "--target", "Tide-05", "--targets", TARGETS, "--ra", "10", "--dec", "-30"])
    assert code == 2
    assert "give either --target or --ra/--dec, not both" in capsys.readouterr().err


def test_a_huge_output_asks_for_force(capsys):
    args = ["delays", "--array", ARRAY, "--config", "long", "--night", "2027-04-18",
            "--ra", "14:30:00", "--dec", "-40", "--json"]
    assert main([*args, "--step-min", "0.01"]) == 2
    err = capsys.readouterr().err
    assert "pass --force to accept" in err and "MB of JSON" in err
    assert main([*args, "--step-min", "0.1", "--force"]) == 0
    assert len(json.loads(capsys.readouterr().out)["samples"]) > 5000


def test_summary_figures_are_defined_and_reasons_group_alone(capsys):
    assert main(["plan", "--array", ARRAY, "--config", "long", "--targets", TARGETS,
                 "--night", "2027-04-18", "--solver", "greedy"]) == 0  # fmt: skip
    out = capsys.readouterr().out
    flat = " ".join(out.split())
    for figure in ("value:", "greedy:", "bound:", "gap:", "idle carriage:", "carriage wait:"):
        assert figure in flat, figure
    assert not re.search(r"for \d+ min\)", out)  # no group per visit length
    assert main(["plan", "--array", ARRAY, "--config", "long", "--targets", TARGETS,
                 "--night", "2027-04-18", "--solver", "greedy", "--json"]) == 0  # fmt: skip
    doc = json.loads(capsys.readouterr().out)
    reasons = [u["reason"] for u in doc["unscheduled"]]
    assert all(not re.search(r"\d+ min", r) for r in reasons), reasons
