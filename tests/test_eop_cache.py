"""The Earth-orientation cache gives astropy the same numbers as its own tables:
UT1 - UTC and polar motion at several dates agree exactly with astropy's parse of the
bundled ``astropy-iers-data`` files (the reference library)."""

from __future__ import annotations

import numpy as np
from astropy.time import Time
from astropy.utils import iers

from scheduler.astro import eop_cache

DATES = ["2020-06-01T00:00:00", "2026-11-30T12:00:00", "2027-04-19T03:00:00"]


def test_cache_round_trip_matches_astropy(tmp_path, monkeypatch):
    monkeypatch.setenv("OPDPLAN_CACHE", str(tmp_path))
    reference = iers.IERS_Auto.open()
    eop_cache.install()  # parses, fills the cache
    assert list(tmp_path.glob("earth-orientation-*.npz"))
    with iers.earth_orientation_table.set(iers.IERS_Auto.open()):
        eop_cache.install()  # from the cache this time
        served = iers.earth_orientation_table.get()
        when = Time(DATES, scale="utc")
        assert np.array_equal(served.ut1_utc(when).value, reference.ut1_utc(when).value)
        for a, b in zip(served.pm_xy(when), reference.pm_xy(when), strict=True):
            assert np.array_equal(a.value, b.value)


def test_unwritable_cache_is_not_an_error(tmp_path, monkeypatch):
    blocked = tmp_path / "file"
    blocked.write_text("not a folder")
    monkeypatch.setenv("OPDPLAN_CACHE", str(blocked / "inside"))
    eop_cache.install()
    assert iers.earth_orientation_table.get() is not None
