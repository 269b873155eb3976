"""lodeline user interfaces: the command line (``tui.cli``) and the Textual application.

The command-line subcommands never import Textual; only ``lodeline open`` (and ``lodeline``
with no arguments) does.
"""
