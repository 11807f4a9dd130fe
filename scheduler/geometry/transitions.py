"""Transition time between two pointings: telescope slew, carriage move, acquisition.

A transition lasts the longer of the telescope slew and the carriage repositioning, then
acquisition (DOMAIN.md section 4).  The slew is the larger axis move over the slew rate
plus settling (shortest way round in azimuth, no cable wrap); the carriage move is the
exact minimax move of :mod:`scheduler.reposition` plus settling.  Functions here are
vectorised over any number of transitions.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.geometry.reposition import minimax_move, move_upper_bound
from scheduler.model.array import Beams, Overheads


@dataclass(frozen=True, eq=False)
class Transition:
    """Components in seconds (``setup_s``: the extra set-up of another observing mode);
    ``dk_m`` the change of the common constant K chosen."""

    slew_s: np.ndarray
    carriage_s: np.ndarray
    acquisition_s: np.ndarray
    dk_m: np.ndarray
    setup_s: np.ndarray | float = 0.0

    @property
    def total_s(self) -> np.ndarray:
        return np.maximum(self.slew_s, self.carriage_s) + self.acquisition_s + self.setup_s


def slew_time_s(alt_a, az_a, alt_b, az_b, over: Overheads) -> np.ndarray:
    daz = np.abs(np.angle(np.exp(1j * (np.asarray(az_b) - np.asarray(az_a)))))
    dalt = np.abs(np.asarray(alt_b) - np.asarray(alt_a))
    return np.maximum(daz, dalt) / over.slew_rate_rad_s + over.settle_s


def transition(
    beams: Beams, over: Overheads, alt_a, az_a, pds_a, low_a, high_a, alt_b, az_b, pds_b,
    low_b, high_b, exact: bool = True, setup_s: np.ndarray | float = 0.0,
) -> Transition:  # fmt: skip
    """From the end of A to the start of B.  ``pds_*`` are (L, ...) projected paths,
    ``low_*``/``high_*`` the feasible K span at each instant; ``setup_s`` the set-up of
    B's observing mode when A used another.  ``exact=False`` takes the cheaper upper
    bound of the carriage move (for bounds over many pairs)."""
    slew = slew_time_s(alt_a, az_a, alt_b, az_b, over)
    g = np.moveaxis(np.asarray(pds_b) - np.asarray(pds_a), 0, -1)  # (..., L)
    dk_lo = np.asarray(low_b) - np.asarray(high_a)
    dk_hi = np.asarray(high_b) - np.asarray(low_a)
    mover = minimax_move if exact else move_upper_bound
    dk, move = mover(g, beams.rate_m_s, dk_lo, np.maximum(dk_hi, dk_lo))
    carriage = move + over.settle_s
    acq = np.full(np.shape(slew), over.acquisition_s)
    return Transition(slew, carriage, acq, dk, setup_s)
