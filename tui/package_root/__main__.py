"""``python -m lodeline``: the command line, as the ``lodeline`` command runs it."""

from .tui.cli import main

raise SystemExit(main())
