"""Settings shared by every test module."""

import os

from hypothesis import settings

# Under CI the property tests draw the same examples on every run, so a red run can be
# reproduced; elsewhere hypothesis keeps exploring new ones.
settings.register_profile("ci", derandomize=True)
if os.environ.get("CI", "").lower() in ("1", "true", "yes"):
    settings.load_profile("ci")
