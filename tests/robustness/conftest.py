"""Hypothesis profile for the fuzz tests: bounded, reproducible, no deadline.

``derandomize=True`` makes every CI run draw the same cases; set
``SPRINGSYNTH_FUZZ_SCALE=10`` (or any factor) to run more examples locally, and
``SPRINGSYNTH_FUZZ_RANDOM=1`` to draw fresh ones.
"""

from __future__ import annotations

import os

from hypothesis import HealthCheck, settings

settings.register_profile(
    "springsynth-fuzz",
    deadline=None,
    derandomize=os.environ.get("SPRINGSYNTH_FUZZ_RANDOM") != "1",
    database=None,
    print_blob=True,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large, HealthCheck.filter_too_much,
                           HealthCheck.function_scoped_fixture],
)
FUZZ = settings.get_profile("springsynth-fuzz")
SCALE = float(os.environ.get("SPRINGSYNTH_FUZZ_SCALE", "1"))


def examples(n: int) -> int:
    """Examples for one fuzz test (scaled by ``SPRINGSYNTH_FUZZ_SCALE``)."""
    return max(1, int(n * SCALE))
