"""Earth-orientation data without parsing the bundled tables at every start.

astropy reads its bundled Earth-orientation tables (``astropy-iers-data``) the first time
a transform needs UT1 - UTC or polar motion, which takes about a second.  The columns
astropy then uses (MJD, UT1 - UTC, polar motion and their source flags) are kept in a
cache file named after the astropy and data-package versions, and handed to astropy at
the next start: the same numbers, read in milliseconds.  A new data package means a new
file; without a writable cache folder (``OPDPLAN_CACHE``, else ``$XDG_CACHE_HOME/opdplan``,
else ``~/.cache/opdplan``) astropy simply parses the tables as before.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path
from typing import Any

import numpy as np

COLUMNS = ("MJD", "UT1_UTC", "PM_x", "PM_y", "UT1Flag", "PolPMFlag")
UNITS = {"MJD": "d", "UT1_UTC": "s", "PM_x": "arcsec", "PM_y": "arcsec"}


def cache_dir() -> Path:
    if os.environ.get("OPDPLAN_CACHE"):
        return Path(os.environ["OPDPLAN_CACHE"])
    base = os.environ.get("XDG_CACHE_HOME") or str(Path.home() / ".cache")
    return Path(base) / "opdplan"


def _cache_file() -> Path:
    import astropy
    import astropy_iers_data

    key = f"astropy-{astropy.__version__}-iers-{astropy_iers_data.__version__}"
    return cache_dir() / f"earth-orientation-{key}.npz"


def _store(path: Path, table: Any) -> None:
    """Write the columns atomically; a cache that cannot be written is not an error."""
    arrays: dict[str, Any] = {c: np.asarray(table[c]) for c in COLUMNS}
    arrays["predictive_mjd"] = np.asarray(table.meta["predictive_mjd"])
    arrays["predictive_index"] = np.asarray(table.meta["predictive_index"])
    tmp = None
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=".eop.", suffix=".npz", dir=path.parent)
        with os.fdopen(fd, "wb") as f:
            np.savez(f, **arrays)
        os.replace(tmp, path)
    except OSError:
        if tmp is not None:
            Path(tmp).unlink(missing_ok=True)


def install() -> None:
    """Give astropy the Earth-orientation table from the cache, or parse it once and
    fill the cache."""
    import astropy.units as u
    from astropy.table import QTable
    from astropy.utils import iers

    path = _cache_file()
    try:
        with np.load(path) as data:
            table = QTable({c: data[c] * u.Unit(UNITS[c]) if c in UNITS else data[c]
                            for c in COLUMNS})  # fmt: skip
            table.meta.update(predictive_mjd=float(data["predictive_mjd"]),
                              predictive_index=int(data["predictive_index"]))  # fmt: skip
        iers.earth_orientation_table.set(iers.IERS_Auto(table))
    except (OSError, KeyError, ValueError):
        _store(path, iers.earth_orientation_table.get())
