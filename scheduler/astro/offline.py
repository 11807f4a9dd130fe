"""Keep astropy offline.

astropy would otherwise try to download fresh Earth-orientation (IERS) tables.  opdplan
runs on machines without a network, so it uses the tables bundled with the
``astropy-iers-data`` package and never downloads.  Beyond the end of the bundled
predictions astropy extrapolates; the resulting UT1-UTC error (well under a second) is
far below anything a night plan depends on, so degraded accuracy is accepted quietly.
"""

import warnings

from astropy.utils import iers

iers.conf.auto_download = False
iers.conf.auto_max_age = None
iers.conf.iers_degraded_accuracy = "ignore"

# past the bundled tables astropy falls back to mean polar motion and says so each time
warnings.filterwarnings("ignore", message="Tried to get polar motions for times after IERS")

try:  # erfa warns about "dubious year" for dates past its leap-second table
    from erfa import ErfaWarning

    warnings.filterwarnings("ignore", category=ErfaWarning)
except ImportError:  # pragma: no cover - erfa always ships with astropy
    pass
