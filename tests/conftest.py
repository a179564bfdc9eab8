"""Shared test settings: hypothesis runs derandomized so CI is repeatable (seeded examples)."""

from hypothesis import settings

settings.register_profile("gasbench", derandomize=True, print_blob=True)
settings.load_profile("gasbench")
