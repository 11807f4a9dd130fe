"""Shared helpers for the numerical-core tests.

``import scheduler.astro`` comes first: it configures astropy to stay offline (no IERS
downloads) before any test module builds a Time or a transform.
"""

import numpy as np
import pytest

import scheduler.astro  # noqa: F401  (offline astropy configuration; must come first)
from scheduler.model.array import Beams


def build_beams(positions_enu_m, path_m=None, opd_min_m=None, opd_max_m=None, rate_m_s=None):
    """A :class:`Beams` of invented test lines, one per station position (L x 3)."""
    p = np.asarray(positions_enu_m, float).reshape(-1, 3)
    count = len(p)

    def col(value, default):
        value = default if value is None else value
        return np.broadcast_to(np.asarray(value, float), (count,)).copy()

    return Beams(
        configuration="test",
        line_names=tuple(f"line-{i}" for i in range(count)),
        station_names=tuple(f"pad-{i}" for i in range(count)),
        position_enu_m=p,
        internal_path_m=col(path_m, 0.0),
        fixed_offset_m=np.zeros(count),
        opd_min_m=col(opd_min_m, 0.0),
        opd_max_m=col(opd_max_m, 120.0),
        rate_m_s=col(rate_m_s, 1.0),
        horizons=tuple(() for _ in range(count)),
    )


@pytest.fixture
def make_beams():
    """Factory fixture: ``make_beams(positions, path_m=..., opd_min_m=..., ...)``."""
    return build_beams


@pytest.fixture(scope="session")
def demo_greedy():
    """The fictional demo night (configuration medium) planned greedily:
    (inputs, context, plan, plan document), planned once per session: never modify
    them (deep-copy the document first)."""
    from pathlib import Path

    from scheduler.cli.commands.common import load_inputs
    from scheduler.model.plan import PlanSettings
    from scheduler.output.plan_document import plan_document
    from scheduler.queue.planner import plan_night

    root = Path(__file__).resolve().parent.parent
    inputs = load_inputs(root / "catalogs" / "demo_array.toml", "medium",
                         root / "catalogs" / "demo_targets.csv", "2027-04-18")  # fmt: skip
    problem = inputs.problem()
    settings = PlanSettings()
    plan = plan_night(problem, settings, "greedy")
    return inputs, problem, plan, plan_document(problem, inputs.array, plan, settings)
