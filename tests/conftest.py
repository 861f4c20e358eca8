"""Shared test settings."""

import os

from hypothesis import HealthCheck, settings

# Numba compiles on first use; a property test's first example may include
# compile time, so deadlines would only measure the JIT.
settings.register_profile("wakes", deadline=None, max_examples=25,
                          suppress_health_check=[HealthCheck.too_slow])
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "wakes"))
