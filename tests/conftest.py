"""Hypothesis profiles for the fuzz suites, and the ``field_calls`` fixture.

- ``ci`` (the default): Hypothesis's own 100 examples a test; the fuzz tests ask for their
  usual counts through :func:`tests.fuzz.examples`, so the suite keeps its time.
- ``nightly``: twenty times as many examples in every fuzz test, no deadline, for a long run:
  ``python -m pytest -q -p hypothesis --hypothesis-profile nightly -m fuzz``
  (or the whole suite with ``--hypothesis-profile nightly``).
"""

from __future__ import annotations

import os
import tempfile

import numpy as np
import pytest
from hypothesis import HealthCheck, settings

# Models kept in binary form go to a folder of the test run, not the user's cache folder.
os.environ.setdefault("LODELINE_CACHE", tempfile.mkdtemp(prefix="lodeline-cache-"))
# Recovery copies and the error log of the desks the tests open go there too (a test that
# checks the folders of its own sets LODELINE_STATE itself).
os.environ.setdefault("LODELINE_STATE", tempfile.mkdtemp(prefix="lodeline-state-"))

settings.register_profile("ci", deadline=None)
settings.register_profile(
    "nightly",
    max_examples=2000,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)
settings.load_profile("ci")


@pytest.fixture
def field_calls(monkeypatch):
    """The number of points of every call to ``lodeline.geo.magnetic.field_at`` made during the
    test (a list, filled as the calls happen; the calls themselves are made as usual)."""
    import lodeline.geo.magnetic

    calls: list[int] = []
    real = lodeline.geo.magnetic.field_at

    def counted(**kw):
        calls.append(int(np.size(kw["lat"])))
        return real(**kw)

    monkeypatch.setattr(lodeline.geo.magnetic, "field_at", counted)
    return calls
