"""Example counts for the fuzz suites that follow the loaded Hypothesis profile."""

from __future__ import annotations

from hypothesis import settings


def examples(n: int) -> int:
    """``n`` examples under the default profile (100 examples a test), scaled by the loaded
    profile: ``nightly`` (2,000) gives ``20 * n``."""
    return max(1, n * settings.default.max_examples // 100)
