"""The astropy edge: time scales, Earth orientation, apparent places, Sun and Moon.

The only layer that imports astropy's coordinates, time and IERS machinery (and erfa).
It prepares, once per night, the plain arrays that the pure numpy geometry turns with
the Earth (:mod:`.ephemeris`, :mod:`.night`, :mod:`.problem`), and holds the
independent full-transform reference that only the verifier uses (:mod:`.reference`).
Importing it configures astropy to stay offline (:mod:`.offline`).
"""

from scheduler.astro import offline  # noqa: F401  (astropy offline before any transform)
from scheduler.astro.eop_cache import install as _install_earth_orientation

_install_earth_orientation()
