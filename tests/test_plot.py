"""The night picture: a PNG written atomically (PNG signature from the PNG
specification, ISO/IEC 15948; the size floor is common practice, no source)."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

from scheduler.commands.common import load_inputs
from scheduler.errors import InputError
from scheduler.plan_model import PlanSettings
from scheduler.planner import plan_night
from scheduler.plot import plot_plan

ROOT = Path(__file__).resolve().parent.parent
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
MIN_PNG_BYTES = 20_000  # two drawn panels; an empty figure is a few kB


@pytest.fixture(scope="module")
def planned():
    pytest.importorskip("matplotlib")
    inputs = load_inputs(ROOT / "catalogs" / "demo_array.toml", "medium",
                         ROOT / "catalogs" / "demo_targets.csv", "2027-04-18")  # fmt: skip
    ctx = inputs.context()
    return ctx, plan_night(ctx, PlanSettings(), "greedy")


def test_writes_a_png_and_leaves_no_temporary_file(planned, tmp_path):
    ctx, plan = planned
    out = tmp_path / "night.png"
    plot_plan(ctx, plan, out)
    data = out.read_bytes()
    assert data[: len(PNG_SIGNATURE)] == PNG_SIGNATURE
    assert len(data) > MIN_PNG_BYTES
    assert [p.name for p in tmp_path.iterdir()] == ["night.png"]


def test_replaces_an_existing_file(planned, tmp_path):
    ctx, plan = planned
    out = tmp_path / "night.png"
    out.write_bytes(b"old")
    plot_plan(ctx, plan, str(out))
    assert out.read_bytes().startswith(PNG_SIGNATURE)
    assert [p.name for p in tmp_path.iterdir()] == ["night.png"]


def test_missing_matplotlib_is_an_input_error(planned, tmp_path, monkeypatch):
    ctx, plan = planned
    monkeypatch.setitem(sys.modules, "matplotlib", None)
    with pytest.raises(InputError) as err:
        plot_plan(ctx, plan, tmp_path / "night.png")
    assert err.value.problems[0].source == "--plot"
    assert "matplotlib" in err.value.problems[0].message
    assert list(tmp_path.iterdir()) == []
