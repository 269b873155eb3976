"""lodeline geodesy core: field models, deed calls, north references, traverses.

This package never imports Textual and never prints. Conventions (azimuths, declination,
convergence, units) are those of the table in DEVELOPERS.md.
"""

__version__ = "0.1.0"
