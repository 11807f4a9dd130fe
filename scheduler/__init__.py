"""opdplan: night queues, replans and semester checks for optical interferometers.

The package is layered one way (DEVELOPERS.md): ``model`` (data) -> ``inputs`` (files)
-> ``geometry`` (pure numpy) -> ``astro`` (the astropy edge) -> ``queue`` -> ``replan``
-> ``semester`` -> ``verify`` -> ``output`` -> ``views`` -> ``cli``.  Importing
``scheduler.astro`` configures astropy to work offline before any transform.
"""

__version__ = "0.2.0"
