"""lodeline user interfaces: the command line (``tui.cli``) and the Textual application.

The command-line subcommands never import Textual; only ``lodeline open`` (and ``lodeline``
with no arguments) does.
"""

import os as _os

# Textual paints at most TEXTUAL_FPS frames a second (60 unless the user sets it) and reads it
# once, when it is first imported: a result shown just after a frame waits for the next one.
# The desk paints only when something has changed, so a higher ceiling costs nothing while the
# screen is still and halves that wait after a keystroke. A value the user set is kept.
_os.environ.setdefault("TEXTUAL_FPS", "120")
