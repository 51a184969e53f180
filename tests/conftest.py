"""Hypothesis profiles: ``make test`` (and CI) runs the property tests on a fixed, repeatable set
of examples; ``make fuzz`` (SW_HYPOTHESIS=fuzz) draws fresh random ones, many more of them.

The repeatable profile sets no per-example deadline and does not fail a test for slow data
generation: both are timings, not results, and a slow shared CI machine would fail on them
with code that is right (the examples and every assertion are the same)."""

import os

from hypothesis import HealthCheck, settings

settings.register_profile("repeatable", derandomize=True, database=None, deadline=None,
                          suppress_health_check=[HealthCheck.too_slow])
settings.register_profile("fuzz", derandomize=False)
settings.load_profile(os.environ.get("SW_HYPOTHESIS", "repeatable"))
