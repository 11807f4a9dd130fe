"""The night timeline view rendered at fixed widths on the demo night's greedy plan:
every name whole, the summary numbers shown, nothing wider than the console (rich's
own testing practice: render into a StringIO at a fixed width and read the text)."""

from __future__ import annotations

import io
from dataclasses import replace
from pathlib import Path

import pytest
from rich.console import Console

from scheduler.views.timeline_rows import timeline_view

ROOT = Path(__file__).resolve().parent.parent
WIDTHS = (80, 140)
WIDE_ENOUGH_FOR_CARRIAGES = 120


@pytest.fixture(scope="module")
def planned(demo_greedy):
    _, ctx, plan, doc = demo_greedy
    return ctx, plan, doc


def render(view, width: int) -> str:
    out = io.StringIO()
    console = Console(file=out, width=width, force_terminal=False, color_system=None)
    console.print(view)
    return out.getvalue()


@pytest.fixture(scope="module", params=WIDTHS)
def rendered(request, planned):
    ctx, plan, doc = planned
    return request.param, render(timeline_view(ctx, plan, doc), request.param), doc


def test_no_line_is_wider_than_the_console(rendered):
    width, text, _ = rendered
    assert max(len(line) for line in text.splitlines()) <= width


def test_scheduled_targets_appear_in_full(rendered):
    _, text, doc = rendered
    assert len(doc["visits"]) >= 6
    for v in doc["visits"]:
        assert v["target"] in text, v["target"]
        assert f"{v['start_utc'][11:16]}–{v['end_utc'][11:16]}" in text


def test_each_visit_has_its_own_row_in_order(rendered):
    _, text, doc = rendered
    rows = [ln for ln in text.splitlines() if ln[:1] in ("█", "▒")]
    assert len(rows) == len(doc["visits"])
    for row, v in zip(rows, doc["visits"], strict=True):
        assert v["target"] in row and v["start_utc"][11:16] in row


def _in_order(words: list[str], tokens: list[str]) -> bool:
    it = iter(tokens)
    return all(any(w == tok for tok in it) for w in words)


def test_unscheduled_targets_and_reasons_appear(rendered):
    """Names whole; each reason's words in order (a long reason may wrap beside its
    targets on a wide console)."""
    _, text, doc = rendered
    assert doc["unscheduled"]
    tokens = text.split()
    for item in doc["unscheduled"]:
        assert item["target"] in text, item["target"]
        assert _in_order(item["reason"].split(), tokens), item["reason"]
        bare = [tok.strip("(),") for tok in tokens]  # figures follow the name in brackets
        assert _in_order(item["detail"].split(), bare), item["detail"]


def test_summary_numbers_appear(rendered):
    _, text, doc = rendered
    s = doc["summary"]
    shown = [
        f"science {s['science_hours']:.2f} h",
        f"value {s['weighted_value']:.2f}",
        f"greedy {s['greedy_value']:.2f}",
        f"idle carriage {s['idle_carriage_s']:.0f} s",
        f"solver {s['solver']}",
    ]
    for item in shown:
        assert item in text, item


def test_utc_and_lst_labels_appear(rendered):
    _, text, doc = rendered
    lines = text.splitlines()
    assert any(ln.startswith("UTC ") for ln in lines)
    assert any(ln.startswith("LST ") for ln in lines)
    assert doc["night"]["start_utc"][11:16] in text


def test_carriage_positions_on_wide_consoles_only(rendered):
    width, text, doc = rendered
    first = doc["visits"][0]["opd_start_m"]
    shown = [f"{x:.2f}" in text for x in first.values()]
    header = all(name in text for name in first)
    if width >= WIDE_ENOUGH_FOR_CARRIAGES:
        assert all(shown) and header
    else:
        assert "carriage positions need" in " ".join(text.split())


def test_bound_and_gap_are_shown_when_present(planned):
    ctx, plan, doc = planned
    plan = replace(plan, summary=replace(plan.summary, bound=41.25, gap=0.0988))
    text = render(timeline_view(ctx, plan, doc), 80)
    assert "bound 41.25" in text and "gap 9.9%" in text
