"""Test-wide settings: no screen for matplotlib, modest hypothesis budgets."""

import os

os.environ.setdefault("MPLBACKEND", "Agg")

from hypothesis import settings  # noqa: E402

settings.register_profile("seaprofile", max_examples=60, deadline=None)
settings.load_profile("seaprofile")
