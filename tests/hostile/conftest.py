"""Configuration of the hostile-input suite (issue 8, section 5).

Hypothesis runs with a bounded, reproducible example count by default so the
suite stays within CI's time (profile ``hostile-ci``: derandomized, no
shrinking, so a failure prints its example quickly and the same way on every
machine).  ``NEVE_HYPOTHESIS_PROFILE=deep`` runs twenty times the examples,
random, with the example database, and shrinks a failure to a minimal
example::

    NEVE_HYPOTHESIS_PROFILE=deep python -m pytest tests/hostile -q -p no:cacheprovider

Derandomized means the same examples for the same test collection: hypothesis
also draws constants from the project's loaded modules, so running one file
alone may generate other examples than the whole suite does.  A failure
prints its example and a ``@reproduce_failure`` line that replays it anywhere.

The profiles are registered in :mod:`tests.hostile.helpers` and never loaded
globally: each test of this folder takes its settings from
:func:`tests.hostile.helpers.examples`, so the other test folders keep their
own hypothesis settings.
"""

from __future__ import annotations

import os

os.environ.setdefault("MPLBACKEND", "Agg")


def pytest_configure(config):
    config.addinivalue_line(
        "markers",
        "issue8(section): a hostile-input case from the hardening issue, by its section",
    )
