"""Loaded by pytest before Django is set up (`-p tests.devenv` in pyproject's addopts).

The test suite runs the app as a developer does: DEBUG on, so the demo's secret key and signing
passphrase apply. A deploy never does: outside DEBUG both must come from the environment.
"""

import os

os.environ.setdefault("DJANGO_DEBUG", "true")
