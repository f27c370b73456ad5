"""Suite-wide settings.

Several tests check hazlint against tools outside the project (iverilog, yosys, Debian's
OpenSTA examples, a real second user for the cache...) and skip, with their reason, where a
developer's machine lacks one. CI must run every one of them: ``.ci/run`` sets
``HAZLINT_REQUIRE_ALL_CHECKS=1``, and then a skipped test is reported as a failure that
keeps the skip's reason.
"""
from __future__ import annotations

import os

import pytest


@pytest.hookimpl(hookwrapper=True)
def pytest_runtest_makereport(item, call):
    outcome = yield
    report = outcome.get_result()
    if report.skipped and os.environ.get("HAZLINT_REQUIRE_ALL_CHECKS") == "1":
        reason = report.longrepr[2] if isinstance(report.longrepr, tuple) else report.longrepr
        report.outcome = "failed"
        report.longrepr = (f"skipped, but HAZLINT_REQUIRE_ALL_CHECKS=1 requires every external "
                           f"check to run: {reason}")
