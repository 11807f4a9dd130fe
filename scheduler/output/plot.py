"""A picture of a planned night: altitudes above, carriage positions below.

Both panels share a UTC axis over the dark interval.  The upper one shows each
scheduled target's altitude through the night (thin) and its visits (thick); the lower
one the optical path each delay line adds during every visit (solid, from the visit's
start to its end) and the moves between visits (dashed), over the band each line can
reach.  matplotlib is optional (``pip install '.[plots]'``) and only imported here.
"""

from __future__ import annotations

import datetime as dt
import io
from typing import Any

import numpy as np

from scheduler.geometry.constraints import evaluate_grid
from scheduler.model.errors import InputError, Problem
from scheduler.model.plan import Plan
from scheduler.model.problem import NightProblem

GRID_STEP_S = 300.0  # altitude curves sampled every five minutes
VISIT_POINTS = 24  # samples of a visit's thick altitude stroke
FIG_SIZE_IN = (11.0, 7.5)
DPI = 110
CALIBRATOR_GREY = "0.45"


def plan_png(ctx: NightProblem, plan: Plan) -> bytes:
    """A PNG of ``plan``: altitudes above, carriage paths below."""
    fig = plan_figure(ctx, plan)
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    return buf.getvalue()


def plan_figure(ctx: NightProblem, plan: Plan) -> Any:
    """The matplotlib figure of :func:`plan_png` (UTC below, LST above)."""
    try:
        from matplotlib import dates as mdates
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure
    except ImportError:
        raise InputError(
            Problem("--plot", "", "needs matplotlib: pip install '.[plots]'")
        ) from None

    night, beams = ctx.night, ctx.beams
    t = night.grid(GRID_STEP_S)
    alt_deg = np.degrees(evaluate_grid(ctx, t).alt_rad)  # (N, T)

    def when(t_s):
        return mdates.date2num([dt.datetime.fromtimestamp(float(x), tz=dt.UTC) for x in
                                np.atleast_1d(t_s)])  # fmt: skip

    fig = Figure(figsize=FIG_SIZE_IN, dpi=DPI)
    FigureCanvasAgg(fig)
    top, bottom = fig.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [1, 1.15]})
    _altitudes(top, ctx, plan, t, alt_deg, when)
    _carriages(bottom, ctx, plan, when)

    bottom.set_xlim(when(night.start_s)[0], when(night.end_s)[0])
    bottom.xaxis.set_major_locator(mdates.HourLocator(tz=dt.UTC))
    bottom.xaxis.set_major_formatter(mdates.DateFormatter("%H:%M", tz=dt.UTC))
    bottom.set_xlabel("UTC")
    _lst_axis(top, ctx, when)
    fig.suptitle(f"Night of {night.date} - configuration {beams.configuration}", fontsize=12)
    fig.text(0.99, 0.005, "advisory: every motion follows the site's own procedures",
             ha="right", va="bottom", fontsize=7, color="0.45", style="italic")  # fmt: skip
    fig.tight_layout(rect=(0, 0.02, 1, 0.97))
    return fig


def _altitudes(ax, ctx: NightProblem, plan: Plan, t, alt_deg, when) -> None:
    """Thin altitude curve per scheduled target, thick over its visits; science in
    colour, calibrators grey."""
    targets, lim = ctx.targets, ctx.limits
    order = list(dict.fromkeys(v.target for v in plan.visits))
    science = [i for i in order if targets.is_science[i]]
    colours = dict(zip(science, _palette(len(science)), strict=True))
    x = when(t)
    for i in order:
        colour = colours.get(i, CALIBRATOR_GREY)
        is_science = i in colours
        ax.plot(x, alt_deg[i], color=colour, lw=0.7, alpha=0.6 if is_science else 0.5,
                ls="-" if is_science else ":")  # fmt: skip
        visits = [v for v in plan.visits if v.target == i]
        for v in visits:
            tv = np.linspace(v.start_s, v.end_s, VISIT_POINTS)
            ax.plot(when(tv), np.interp(tv, t, alt_deg[i]), color=colour,
                    lw=4.0 if is_science else 2.5, solid_capstyle="butt")  # fmt: skip
        if is_science:
            mid = 0.5 * (visits[0].start_s + visits[0].end_s)
            ax.annotate(targets.names[i], (when(mid)[0], np.interp(mid, t, alt_deg[i])),
                        xytext=(0, 6), textcoords="offset points", ha="center",
                        fontsize=7, color=colour)  # fmt: skip
    for limit in (lim.min_altitude_rad, lim.max_altitude_rad):
        deg = float(np.degrees(limit))
        if 0.0 < deg < 90.0:
            ax.axhline(deg, color="0.3", lw=0.8, ls="--")
    ax.set_ylim(0.0, 90.0)
    ax.set_ylabel("altitude, deg")
    ax.set_title("science targets thin over the night, thick while observed; calibrators "
                 "grey; dashed: altitude limits", fontsize=9, loc="left")  # fmt: skip
    ax.grid(alpha=0.25)


def _carriages(ax, ctx: NightProblem, plan: Plan, when) -> None:
    """Each line's optical path during the visits (solid) and between them (dashed),
    over the band of its travel range."""
    beams = ctx.beams
    colours = _palette(len(beams.line_names))
    ranges: dict[tuple[float, float], list[int]] = {}
    for k in range(len(beams.line_names)):
        ranges.setdefault((float(beams.opd_min_m[k]), float(beams.opd_max_m[k])), []).append(k)
    for (lo, hi), members in ranges.items():
        tint = colours[members[0]] if len(members) == 1 else CALIBRATOR_GREY
        ax.axhspan(lo, hi, color=tint, alpha=0.06, lw=0)
        for edge in (lo, hi):
            ax.axhline(edge, color=tint, lw=0.9, ls=(0, (1, 2)))
    for k, (line, colour) in enumerate(zip(beams.line_names, colours, strict=True)):
        for j, v in enumerate(plan.visits):
            ax.plot(when([v.start_s, v.end_s]), [v.opd_start_m[k], v.opd_end_m[k]],
                    color=colour, lw=2.0, label=line if j == 0 else None)  # fmt: skip
            if j + 1 < len(plan.visits):
                nxt = plan.visits[j + 1]
                ax.plot(when([v.end_s, nxt.start_s]), [v.opd_end_m[k], nxt.opd_start_m[k]],
                        color=colour, lw=0.8, ls="--")  # fmt: skip
    for v in plan.visits:
        if ctx.targets.is_science[v.target]:
            ax.axvspan(when(v.start_s)[0], when(v.end_s)[0], color="0.5", alpha=0.08, lw=0)
    low, high = float(np.min(beams.opd_min_m)), float(np.max(beams.opd_max_m))
    pad = 0.04 * (high - low)
    ax.set_ylim(low - pad, high + pad)
    ax.set_ylabel("optical path, m")
    ax.set_title("delay lines: optical path during each visit (solid) and moves between "
                 "visits (dashed); dotted: range limits; shaded: science", fontsize=9,
                 loc="left")  # fmt: skip
    if len(beams.line_names):
        ax.legend(loc="upper left", bbox_to_anchor=(1.0, 1.0), fontsize=8, frameon=False)
    ax.grid(alpha=0.25)


#: qualitative colours with no grey (grey is the calibrators'), cycled when there are
#: more tracks than colours; every track is labelled, so a repeat stays readable
QUALITATIVE = ("tab:blue", "tab:orange", "tab:green", "tab:red", "tab:purple", "tab:brown",
               "tab:pink", "tab:olive", "tab:cyan", "#1b3a6b", "#b8860b", "#006d5b",
               "#8b1a4a", "#5b4bb7", "#d2691e", "#2e8b57")  # fmt: skip


def _palette(count: int) -> list:
    """``count`` colours from :data:`QUALITATIVE`, cycling."""
    return [QUALITATIVE[k % len(QUALITATIVE)] for k in range(count)]


def _lst_axis(ax, ctx: NightProblem, when) -> None:
    """Local sidereal time along the top of ``ax``, at every whole UTC hour."""
    night = ctx.night
    hours = np.arange(np.ceil(night.start_s / 3600.0), np.floor(night.end_s / 3600.0) + 1)
    t = hours * 3600.0
    top = ax.twiny()
    top.set_xlim(ax.get_xlim())
    top.set_xticks(when(t))
    lst_h = np.degrees(night.lst_rad(t)) / 15.0
    top.set_xticklabels([f"{int(h):02d}:{int(round((h % 1) * 60)) % 60:02d}" for h in lst_h],
                        fontsize=8)  # fmt: skip
    top.set_xlabel("local sidereal time", fontsize=8)


def pressure_png(pressure: list[dict]) -> bytes:
    """A PNG per configuration of requested telescope hours and usable dark hours per
    hour of local sidereal time (``pressure`` rows as in ``opdplan fit --json``)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    configs = sorted({b["configuration"] for b in pressure})
    fig, axes = plt.subplots(len(configs), 1, figsize=(9, 2.6 * len(configs)), sharex=True,
                             squeeze=False)  # fmt: skip
    for ax, cfg in zip(axes[:, 0], configs, strict=True):
        rows = [b for b in pressure if b["configuration"] == cfg]
        lst = [b["lst_hour"] for b in rows]
        ax.bar(lst, [b["usable_dark_hours"] for b in rows], width=0.9, color="0.8",
               label="usable dark hours")  # fmt: skip
        ax.bar(lst, [b["requested_hours"] for b in rows], width=0.5, color="tab:red",
               label="requested, with overheads")  # fmt: skip
        ax.set_ylabel(f"{cfg}\nhours")
    axes[-1, 0].set_xlabel("local sidereal time, h")
    axes[-1, 0].set_xticks(range(0, 24, 2))
    handles, labels = axes[0, 0].get_legend_handles_labels()
    fig.legend(handles, labels, loc="lower center", ncol=2, fontsize="small", frameon=False,
               bbox_to_anchor=(0.5, -0.04))  # below the panels, hiding no bar
    fig.suptitle("Pressure per configuration and sidereal time (advisory)")
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=100, bbox_inches="tight")
    plt.close(fig)
    return buf.getvalue()


def uv_png(doc: dict) -> bytes:
    """A PNG of each target's (u, v) plane in mega-wavelengths (``opdplan uv --json``
    document): every baseline's samples and their mirrors, one colour per baseline."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    targets = doc["targets"] or [None]
    fig, axes = plt.subplots(1, len(targets), figsize=(4.6 * len(targets), 4.6), squeeze=False)
    for ax, t in zip(axes[0], targets, strict=True):
        if t is None:
            ax.set_title("no science visit")
            continue
        for b in t["baselines"]:
            u = [s["u_mlambda"] for s in b["samples"]]
            v = [s["v_mlambda"] for s in b["samples"]]
            line = ax.plot(u, v, ".", ms=3, label=b["name"])[0]
            ax.plot([-x for x in u], [-y for y in v], ".", ms=3, color=line.get_color(),
                    alpha=0.5)  # fmt: skip
        ax.set_aspect("equal")
        ax.invert_xaxis()  # east to the left, as on the sky
        ax.set_xlabel("u, mega-wavelengths")
        ax.set_ylabel("v, mega-wavelengths")
        ax.set_title(f"{t['target']} ({t['wavelength_um']:g} um)")
        ax.legend(fontsize="x-small", loc="upper left", bbox_to_anchor=(1.0, 1.0))
    fig.suptitle(f"(u, v) coverage, night of {doc['night']['date']}, "
                 f"{doc['configuration']} (advisory)")  # fmt: skip
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=100, bbox_inches="tight")
    plt.close(fig)
    return buf.getvalue()


def reach_png(doc: dict, opened: set[str] | None = None) -> bytes:
    """A PNG of one choice's reachable sky (an ``opdplan-reach-map/1`` document): the
    carriage headroom shaded where every carriage reaches, grey where the altitude is
    fine but a carriage runs out, blank below the altitude limit; the pool's tracks
    tonight over it, solid for targets the choice ``opened`` (all when None), dotted
    for the others, each labelled."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    ha, dec = np.array(doc["ha_h"]), np.array(doc["dec_deg"])
    room = np.array([[np.nan if v is None else v for v in row] for row in doc["headroom_m"]])
    ok = np.array(doc["reachable"], bool)
    fig, ax = plt.subplots(figsize=(10, 5.8))
    ax.pcolormesh(ha, dec, np.where(~ok & ~np.isnan(room), 1.0, np.nan), cmap="Greys",
                  vmin=0, vmax=3, shading="nearest")  # fmt: skip
    shade = ax.pcolormesh(ha, dec, np.where(ok, room, np.nan), cmap="viridis",
                          shading="nearest")  # fmt: skip
    fig.colorbar(shade, ax=ax, label="least carriage headroom, m (optical path)")
    colours = _palette(len(doc["tracks"]))
    for colour, tr in zip(colours, doc["tracks"], strict=True):
        x = np.array([np.nan if v is None else v for v in tr["ha_h"]], float)
        jump = np.abs(np.diff(x, prepend=x[0])) > 12  # no line across the wrap at 12 h
        x = np.where(jump, np.nan, x)
        solid = opened is None or tr["target"] in opened
        ax.plot(x, np.full(x.shape, tr["dec_deg"]), "-" if solid else ":", color=colour,
                lw=1.8 if solid else 1.0)  # fmt: skip
        last = x[np.isfinite(x)]
        if last.size:
            ax.annotate(tr["target"], (last[-1], tr["dec_deg"]), fontsize=6, color=colour,
                        xytext=(2, 1), textcoords="offset points")  # fmt: skip
    up = ha[np.any(~np.isnan(room), axis=0)]
    ax.set_xlim(*((up.min() - 0.5, up.max() + 0.5) if up.size else (ha[0], ha[-1])))
    ax.set_xlabel("hour angle, h (west positive)")
    ax.set_ylabel("declination, deg")
    ax.set_title(f"Reachable sky: {doc['title']}\n(grey: a carriage runs out of range; "
                 "blank: below the altitude limit; solid tracks: open tonight)",
                 fontsize=10)  # fmt: skip
    fig.text(0.99, 0.005, "advisory: every motion follows the site's own procedures",
             ha="right", va="bottom", fontsize=7, color="0.45", style="italic")  # fmt: skip
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=100, bbox_inches="tight")
    plt.close(fig)
    return buf.getvalue()
