"""Where the tests find the read-only shared test data (published WMM test values, gufm1).

The data lives beside the project (``<repo>/../shared/data``), never inside it;
``LODELINE_TEST_DATA`` names another folder. Tests that need a file skip with a clear reason
when it is absent.
"""

from __future__ import annotations

import os
from pathlib import Path

_REPO = Path(__file__).resolve().parents[1]


def shared_data_dir() -> Path:
    """The folder holding the shared test data (it may not exist)."""
    env = os.environ.get("LODELINE_TEST_DATA")
    if env:
        return Path(env)
    return _REPO.parent / "shared" / "data"


DATA = shared_data_dir()
GUFM1 = DATA / "gufm1.txt"
