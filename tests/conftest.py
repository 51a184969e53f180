"""Hypothesis profiles: ``make test`` (and CI) runs the property tests on a fixed, repeatable set
of examples; ``make fuzz`` (SW_HYPOTHESIS=fuzz) draws fresh random ones, many more of them."""

import os

from hypothesis import settings

settings.register_profile("repeatable", derandomize=True, database=None)
settings.register_profile("fuzz", derandomize=False)
settings.load_profile(os.environ.get("SW_HYPOTHESIS", "repeatable"))
