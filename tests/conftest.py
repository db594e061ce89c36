"""Hypothesis profiles: derandomised in CI, random on a developer's machine.

With the environment variable ``CI`` set (``.ci/run`` sets it) every
property test draws the same examples on every run and keeps no example
database, so the suite's verdict never depends on what earlier runs found.
Locally the examples are random (and remembered) to keep finding new cases.
"""

import os

from hypothesis import settings

settings.register_profile("ci", derandomize=True, database=None, print_blob=True)
settings.register_profile("dev")
settings.load_profile("ci" if os.environ.get("CI") else "dev")
