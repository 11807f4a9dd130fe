"""The night picture: a PNG (signature from the PNG specification, ISO/IEC 15948; the
size floor is common practice, no source), and ``--plot`` without matplotlib refused
before any work."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

from scheduler.cli.commands.common import load_inputs
from scheduler.cli.main import main
from scheduler.model.plan import PlanSettings
from scheduler.output.plot import plan_png
from scheduler.queue.planner import plan_night

ROOT = Path(__file__).resolve().parent.parent
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
MIN_PNG_BYTES = 20_000  # two drawn panels; an empty figure is a few kB


@pytest.fixture(scope="module")
def planned():
    pytest.importorskip("matplotlib")
    inputs = load_inputs(ROOT / "catalogs" / "demo_array.toml", "medium",
                         ROOT / "catalogs" / "demo_targets.csv", "2027-04-18")  # fmt: skip
    ctx = inputs.problem()
    return ctx, plan_night(ctx, PlanSettings(), "greedy")


def test_png_of_a_plan(planned):
    ctx, plan = planned
    data = plan_png(ctx, plan)
    assert data[: len(PNG_SIGNATURE)] == PNG_SIGNATURE
    assert len(data) > MIN_PNG_BYTES


def test_missing_matplotlib_is_refused_before_any_work(tmp_path, monkeypatch, capsys):
    monkeypatch.setitem(sys.modules, "matplotlib", None)
    out = tmp_path / "night.png"
    code = main(["plan", "--array", str(ROOT / "catalogs" / "demo_array.toml"), "--config",
                 "medium", "--targets", str(ROOT / "catalogs" / "demo_targets.csv"), "--night",
                 "2027-04-18", "--plot", str(out)])  # fmt: skip
    err = capsys.readouterr().err
    assert code == 2 and "--plot" in err and "matplotlib" in err
    assert list(tmp_path.iterdir()) == []
