"""An imaging campaign: visits of each target wanted per configuration over several
nights, and the visits done so far (from the nights' logs).  Loaded by
:mod:`scheduler.inputs.campaign_file` and :mod:`scheduler.inputs.campaign_log`."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass


@dataclass(frozen=True)
class CampaignTarget:
    """``target`` wants ``visits[configuration]`` visits; ``ha_spread_rad`` (None: the
    catalog's ``ha_spread_h``) keeps their mid-visit hour angles apart."""

    target: str
    visits: tuple[tuple[str, int], ...]
    ha_spread_rad: float | None = None

    def wanted(self, configuration: str) -> int:
        return dict(self.visits).get(configuration, 0)


@dataclass(frozen=True)
class Campaign:
    name: str
    targets: tuple[CampaignTarget, ...]
    source: str = ""

    def target(self, name: str) -> CampaignTarget | None:
        return next((t for t in self.targets if t.target == name), None)


@dataclass(frozen=True)
class DoneVisit:
    """A science visit logged done: its night, target, configuration, times (POSIX s)
    and where it was logged."""

    night: dt.date
    visit: str
    target: str
    configuration: str
    start_s: float
    end_s: float
    source: str = ""

    @property
    def mid_s(self) -> float:
        return 0.5 * (self.start_s + self.end_s)


@dataclass(frozen=True)
class CampaignState:
    """A campaign and its visits done so far."""

    campaign: Campaign
    done: tuple[DoneVisit, ...]

    def done_of(self, target: str, configuration: str | None = None) -> list[DoneVisit]:
        return [d for d in self.done if d.target == target
                and (configuration is None or d.configuration == configuration)]  # fmt: skip

    def remaining(self, target: str, configuration: str) -> int:
        t = self.campaign.target(target)
        if t is None:
            return 0
        return max(0, t.wanted(configuration) - len(self.done_of(target, configuration)))
