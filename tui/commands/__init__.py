"""One module per ``lodeline`` subcommand.

Each module defines ``register(subparsers)``, which adds its parser and sets
``func=run`` on it, and ``run(args) -> int``. Modules import only the standard library at
top level; numpy, pyproj and the core are imported inside ``run`` so ``--help`` stays fast.
"""
