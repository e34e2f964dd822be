"""Test-wide settings: the Hypothesis profile, chosen so that every run of the suite is the same.

Profiles
--------
``ci`` (the default everywhere, and always when CI=true): derandomised, so the
property tests draw the same examples on every machine and every run; no
example database, so a failure seen once is not replayed from a local
``.hypothesis`` folder on the next run; no deadline (the 2 cores may be shared).
A test's own ``@settings`` (its number of examples) still applies.

``explore`` (on request, not in CI): random examples, ten times as many, to
hunt for new failing cases::

    HYPOTHESIS_PROFILE=explore pytest tests/test_flow_properties.py

A case it finds becomes an explicit test (e.g. the levelling Cross fluid in
tests/test_flow_limits.py), so the ordinary run stays deterministic.
"""

from __future__ import annotations

import os

from hypothesis import settings

#: examples per property test that does not set its own number
MAX_EXAMPLES = 100

settings.register_profile("ci", derandomize=True, database=None, max_examples=MAX_EXAMPLES, deadline=None)
settings.register_profile("explore", max_examples=10 * MAX_EXAMPLES, deadline=None)

PROFILE = "ci" if os.environ.get("CI") == "true" else os.environ.get("HYPOTHESIS_PROFILE", "ci")
settings.load_profile(PROFILE)


def _profile_line() -> str:
    # the name as Hypothesis holds it: its own --hypothesis-profile option may have changed it
    name = getattr(settings, "get_current_profile_name", lambda: PROFILE)()
    current = settings.default
    return (f"hypothesis profile {name!r}: derandomize={current.derandomize}, "
            f"max_examples={current.max_examples}, deadline={current.deadline}")


def pytest_report_header(config):
    """The profile in the header (shown unless -q)."""
    return _profile_line()


def pytest_terminal_summary(terminalreporter):
    """The profile at the end of the run too, since the project's pytest runs with -q."""
    terminalreporter.write_line(_profile_line())
