"""lodeline: magnetic, true and grid bearings of old deeds and compass lines.

The installed package ``lodeline`` holds the geodesy core (:mod:`lodeline.geo`, the
repository's ``geo/`` folder), the command line and terminal application
(:mod:`lodeline.tui`, the ``tui/`` folder) and the demo documents (``lodeline.demos``, the
``demo_traverses/`` folder). ``python -m lodeline`` runs the command line.
"""

from .geo import __version__

__all__ = ["__version__"]
