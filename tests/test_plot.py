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


def _grey(colour) -> bool:
    from matplotlib.colors import to_rgb

    r, g, b = to_rgb(colour)
    return max(r, g, b) - min(r, g, b) < 0.05


def test_plan_figure_has_both_time_axes_and_a_colour_per_science_track(planned):
    """UTC below and local sidereal time above; each science target's visits in a
    colour of its own, never the calibrators' grey (common practice, no source)."""
    from scheduler.output.plot import plan_figure

    ctx, plan = planned
    fig = plan_figure(ctx, plan)
    labels = {ax.get_xlabel() for ax in fig.axes} | {ax.get_ylabel() for ax in fig.axes}
    assert {"UTC", "local sidereal time", "altitude, deg", "optical path, m"} <= labels
    top = next(ax for ax in fig.axes if ax.get_ylabel() == "altitude, deg")
    thick = [ln for ln in top.get_lines() if ln.get_linewidth() >= 4.0]
    science = {v.target for v in plan.visits if v.is_science}
    colours = {ln.get_color() for ln in thick}
    assert len(colours) == len(science) >= 8
    assert not any(_grey(c) for c in colours)
    names = {t.get_text() for t in top.texts}
    assert {ctx.targets.names[i] for i in science} <= names


def test_colours_cycle_without_grey_and_the_png_has_the_figure_size(planned):
    from matplotlib.image import imread

    from scheduler.output.plot import DPI, FIG_SIZE_IN, _palette

    many = _palette(40)
    assert not any(_grey(c) for c in many) and len(set(many[:16])) == 16
    ctx, plan = planned
    image = imread(__import__("io").BytesIO(plan_png(ctx, plan)), format="png")
    assert image.shape[:2] == (round(FIG_SIZE_IN[1] * DPI), round(FIG_SIZE_IN[0] * DPI))


def test_pressure_legend_sits_below_the_panels():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from scheduler.output.plot import pressure_png

    rows = [{"configuration": c, "lst_hour": h, "requested_hours": 3.0, "usable_dark_hours": 4.0}
            for c in ("a", "b") for h in range(24)]  # fmt: skip
    made = []
    real = plt.subplots

    def spy(*args, **kwargs):
        fig, axes = real(*args, **kwargs)
        made.append(fig)
        return fig, axes

    plt.subplots = spy
    try:
        data = pressure_png(rows)
    finally:
        plt.subplots = real
    assert data[: len(PNG_SIGNATURE)] == PNG_SIGNATURE
    fig = made[0]
    assert fig.legends and all(ax.get_legend() is None for ax in fig.axes)
