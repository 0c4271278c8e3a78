"""Suite-wide settings: CI runs hypothesis derandomised so a landing never depends on luck."""

import os

from hypothesis import settings

settings.register_profile("ci", derandomize=True, deadline=None)
if os.environ.get("CI"):
    settings.load_profile("ci")
