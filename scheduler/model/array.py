"""The array model: site, limits, overheads, stations, delay lines, configurations.

Frozen dataclasses, SI units inside (metres, seconds, radians), the unit in each name.
A :class:`Configuration` says which station feeds which delay line; resolving it with
:meth:`ArrayModel.beams` gives a :class:`Beams` object, the numpy view of the lines in
use that the numerical core works with.

Sign conventions (see DOMAIN.md section 3): station positions are east, north, up
(ENU) from the array reference point; ``internal_path_m`` is the fixed optical path from
the station to the combiner without the delay line; the optical path a line must add is
``x_i = K + p_i . s - a_i - f_i`` with ``K`` a constant common to all lines.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass, field, replace

import numpy as np


@dataclass(frozen=True)
class Site:
    """Where the array stands: geodetic latitude and longitude (east positive)."""

    name: str
    latitude_rad: float
    longitude_rad: float
    height_m: float


@dataclass(frozen=True)
class Limits:
    """Pointing, sky and measurement limits.  Altitudes are unrefracted.

    ``min_squared_visibility``: a baseline on which a target's V^2 falls below it (or
    past the first null) measures nothing; ``calibrator_error_max``: the most a
    calibrator's diameter uncertainty may add to the calibrated V^2 (sigma of V^2);
    ``diameter_error_fraction``: the relative diameter uncertainty assumed where the
    catalog gives none; ``wind_speed_max_m_s`` and ``wind_halfwidth_rad``: above that
    wind speed no telescope points within that angle of the azimuth the wind comes from
    (inf: no wind limit)."""

    min_altitude_rad: float = float(np.radians(30.0))
    max_altitude_rad: float = float(np.radians(87.0))
    sun_altitude_max_rad: float = float(np.radians(-12.0))
    moon_separation_min_rad: float = float(np.radians(15.0))
    sun_separation_min_rad: float = float(np.radians(45.0))
    min_squared_visibility: float = 0.01
    calibrator_error_max: float = 0.02
    diameter_error_fraction: float = 0.1
    wind_speed_max_m_s: float = float("inf")
    wind_halfwidth_rad: float = float(np.radians(45.0))


@dataclass(frozen=True)
class Mode:
    """An observing mode of the beam combiner: its effective wavelength and bandwidth
    (m), the faintest magnitudes its fringe tracker (in ``tracking_band``) and the
    telescopes' guiding (in ``guiding_band``) work with at the reference seeing (rad) and
    coherence time (s), how these limits move with the conditions (see
    :mod:`scheduler.model.conditions`), and the extra set-up time (s) when the previous
    visit used another mode.  Limits of inf: none."""

    name: str
    wavelength_m: float = 1.65e-6
    bandwidth_m: float = 0.3e-6
    tracking_band: str = "H"
    tracking_limit_mag: float = float("inf")
    guiding_band: str = "V"
    guiding_limit_mag: float = float("inf")
    reference_seeing_rad: float = float(np.radians(0.8 / 3600.0))
    reference_coherence_s: float = 0.004
    setup_s: float = 0.0
    coherence_coefficient: float = 1.0
    seeing_coefficient: float = 2.0


DEFAULT_MODE = Mode("default")  # an array file without [[modes]]: 1.65 um, no limits


@dataclass(frozen=True)
class Overheads:
    """Time costs of changing target.

    ``slew_rate_rad_s`` applies to both telescope axes; ``settle_s`` is added after a
    telescope slew and after a carriage move; ``acquisition_s`` follows every change of
    target (pointing, tip-tilt lock, fringe search).
    """

    acquisition_s: float = 480.0
    slew_rate_rad_s: float = float(np.radians(1.5))
    settle_s: float = 5.0


@dataclass(frozen=True)
class Station:
    """A fixed pad.  ``horizon`` is a tuple of (azimuth_rad, min_altitude_rad) points,
    azimuth from north through east, interpolated linearly and wrapping at 2 pi."""

    name: str
    east_m: float
    north_m: float
    up_m: float
    internal_path_m: float
    horizon: tuple[tuple[float, float], ...] = ()

    @property
    def enu_m(self) -> np.ndarray:
        return np.array([self.east_m, self.north_m, self.up_m])


@dataclass(frozen=True)
class DelayLine:
    """A delay line, in optical path (twice the carriage's mechanical travel)."""

    name: str
    opd_min_m: float
    opd_max_m: float
    max_rate_m_s: float


@dataclass(frozen=True)
class Configuration:
    """Which station feeds each delay line, and fixed offsets inserted for the night."""

    name: str
    feeds: tuple[tuple[str, str], ...]  # (delay line, station)
    fixed_offsets_m: tuple[tuple[str, float], ...] = ()

    def offset_m(self, line: str) -> float:
        return dict(self.fixed_offsets_m).get(line, 0.0)


@dataclass(frozen=True, eq=False)
class Beams:
    """The lines of one configuration as arrays, one entry per line in use.

    Attributes are numpy arrays of length L (``position_enu_m`` is L x 3).  ``path_m``
    is ``internal_path_m + fixed_offset_m``: the constant part of each light path.
    """

    configuration: str
    line_names: tuple[str, ...]
    station_names: tuple[str, ...]
    position_enu_m: np.ndarray
    internal_path_m: np.ndarray
    fixed_offset_m: np.ndarray
    opd_min_m: np.ndarray
    opd_max_m: np.ndarray
    rate_m_s: np.ndarray
    horizons: tuple[tuple[tuple[float, float], ...], ...] = field(default=())

    @property
    def path_m(self) -> np.ndarray:
        return self.internal_path_m + self.fixed_offset_m

    def __len__(self) -> int:
        return len(self.line_names)

    def longest_baseline_m(self) -> float:
        p = self.position_enu_m
        return float(np.max(np.linalg.norm(p[:, None, :] - p[None, :, :], axis=-1)))


def _did_you_mean(name: str, choices: list[str]) -> str:
    close = difflib.get_close_matches(name, choices, n=1)
    hint = f"; did you mean {close[0]!r}?" if close else ""
    return f"{name!r} is not one of {sorted(choices)}{hint}"


@dataclass(frozen=True)
class FixedDelayOptions:
    """The fixed delays (optical path, metres) that can be inserted on one delay line
    for a night; the set-up advisor (``opdplan advise``) chooses among them."""

    line: str
    options_m: tuple[float, ...]


@dataclass(frozen=True)
class ArrayModel:
    """A whole array description as loaded from an array file.  ``fixed_delays`` and
    ``routing_free`` (any delay line may be fed by any station of a configuration) are
    the choices a night's set-up may make."""

    site: Site
    limits: Limits
    overheads: Overheads
    stations: tuple[Station, ...]
    delay_lines: tuple[DelayLine, ...]
    configurations: tuple[Configuration, ...]
    source: str = ""
    modes: tuple[Mode, ...] = (DEFAULT_MODE,)
    fixed_delays: tuple[FixedDelayOptions, ...] = ()
    routing_free: bool = False

    def mode(self, name: str) -> Mode:
        """The mode called ``name``; the first mode for an empty name."""
        if not name:
            return self.modes[0]
        for m in self.modes:
            if m.name == name:
                return m
        raise KeyError(_did_you_mean(name, [m.name for m in self.modes]))

    def mode_index(self, name: str) -> int:
        return self.modes.index(self.mode(name))

    def station(self, name: str) -> Station:
        for s in self.stations:
            if s.name == name:
                return s
        raise KeyError(_did_you_mean(name, [s.name for s in self.stations]))

    def delay_line(self, name: str) -> DelayLine:
        for d in self.delay_lines:
            if d.name == name:
                return d
        raise KeyError(_did_you_mean(name, [d.name for d in self.delay_lines]))

    def configuration(self, name: str) -> Configuration:
        for c in self.configurations:
            if c.name == name:
                return c
        raise KeyError(_did_you_mean(name, [c.name for c in self.configurations]))

    def beams(self, configuration: str, out: frozenset[str] = frozenset()) -> Beams:
        """Resolve a configuration into arrays.

        ``out`` names stations or delay lines that are unavailable; their lines are
        dropped, so the remaining baselines alone constrain the delay.
        """
        return self.beams_of(self.configuration(configuration), out)

    def beams_of(self, config: Configuration, out: frozenset[str] = frozenset()) -> Beams:
        """:meth:`beams` of a configuration given whole (one the file need not hold)."""
        feeds = [(ln, st) for ln, st in config.feeds if ln not in out and st not in out]
        lines = [self.delay_line(ln) for ln, _ in feeds]
        stations = [self.station(st) for _, st in feeds]
        return Beams(
            configuration=config.name,
            line_names=tuple(d.name for d in lines),
            station_names=tuple(s.name for s in stations),
            position_enu_m=np.array([s.enu_m for s in stations]).reshape(-1, 3),
            internal_path_m=np.array([s.internal_path_m for s in stations], dtype=float),
            fixed_offset_m=np.array([config.offset_m(d.name) for d in lines], dtype=float),
            opd_min_m=np.array([d.opd_min_m for d in lines], dtype=float),
            opd_max_m=np.array([d.opd_max_m for d in lines], dtype=float),
            rate_m_s=np.array([d.max_rate_m_s for d in lines], dtype=float),
            horizons=tuple(s.horizon for s in stations),
        )

    def with_configuration(self, config: Configuration) -> ArrayModel:
        """The same array with ``config`` added (or replacing the one of its name)."""
        kept = tuple(c for c in self.configurations if c.name != config.name)
        return replace(self, configurations=kept + (config,))
