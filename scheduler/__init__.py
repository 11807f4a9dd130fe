"""opdplan: night queues, replans and semester checks for optical interferometers.

The package is layered one way: the array model and catalog (data), the numerical
core over numpy arrays (sky, delay, windows), the solver and the verifier, then the
views and the command line at the edge.  Importing the package configures astropy to
work offline (see :mod:`scheduler._offline`).
"""

from scheduler import _offline  # noqa: F401  (must run before any astropy transform)

__version__ = "0.1.0"
