"""Shared test settings."""

import os

from hypothesis import HealthCheck, settings

# Numba compiles on first use; a property test's first example may include
# compile time, so deadlines would only measure the JIT. Examples are drawn
# from a fixed seed and no example database is kept, so every machine, warm or
# cold, tries the same inputs and reaches the same verdict.
settings.register_profile("wakes", deadline=None, max_examples=25, derandomize=True, database=None,
                          suppress_health_check=[HealthCheck.too_slow])
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "wakes"))
