"""What the desk's pilot tests share: a test square and helpers to run and settle a pilot.

The document is invented (demo data): a 10-chain square recorded in true bearings.
"""

from __future__ import annotations

import asyncio
import functools

SQUARE = """\
format_version = 1
title = "Test square, Marrow Creek"
closed = true

[place]
lat = 40.0
lon = -77.0

[record]
reference = "true"
distance_unit = "chain"
foot = "us"

[target]
date = "2025-06-01"

[[course]]
call = "N 10 E 10 chains to a stone"

[[course]]
call = "S 80 E 10 chains"

[[course]]
call = "S 10 W 10 chains"

[[course]]
call = "N 80 W 10 chains to the beginning"
"""


def sync(test):
    """Run an async pilot test with asyncio (no async plugin needed)."""

    @functools.wraps(test)
    def run(*args, **kwargs):
        asyncio.run(test(*args, **kwargs))

    return run


async def settle(pilot, seconds: float = 0.08) -> None:
    """Wait until the desk has shown what was typed: a recomputation still waiting for a
    pause in typing has run, and the workers are done."""
    await pilot.pause(seconds)
    for _ in range(100):
        desk = next((s for s in pilot.app.screen_stack if hasattr(s, "recompute_typed")), None)
        if desk is None or desk._timer is None:
            break
        await pilot.pause(0.02)
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()
