"""How many examples the hardening property tests draw: a short CI run or a long run on demand.

``RUNGWISE_HYPOTHESIS_PROFILE=long`` multiplies every test's CI budget so that the hardening tests
together draw at least 10^4 examples; unset (or ``ci``) keeps the CI run short.
"""

from __future__ import annotations

import os

from hypothesis import HealthCheck, settings

PROFILE = os.environ.get("RUNGWISE_HYPOTHESIS_PROFILE", "ci").strip().lower() or "ci"
if PROFILE not in {"ci", "long"}:
    raise RuntimeError(f"RUNGWISE_HYPOTHESIS_PROFILE={PROFILE!r}: use 'ci' or 'long'")

LONG_FACTOR = 40
"""Long run: each test draws this many times its CI budget."""


def budget(ci_examples: int) -> settings:
    """Hypothesis settings drawing ``ci_examples`` in CI (seeded) and ``LONG_FACTOR`` times more
    (fresh random examples) in the long profile."""
    long = PROFILE == "long"
    return settings(max_examples=ci_examples * (LONG_FACTOR if long else 1), deadline=None,
                    derandomize=not long, database=None,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much,
                                           HealthCheck.data_too_large])
