"""A tally of the fuzz: cases sent per operation and server errors seen, printed at the end of
the run and written to /tmp/parapet-fuzz-<database>.json so a run's figures can be quoted."""

import json
import os
from collections import Counter
from pathlib import Path

import pytest
from django.db import connection

TRACE_MARKERS = (b"Traceback (most recent call last)", b'File "/', b"django/core/handlers")

CASES: Counter[tuple[str, str]] = Counter()
"""(suite, operation) -> requests sent."""
SERVER_ERRORS: Counter[tuple[str, str]] = Counter()
"""(suite, operation) -> answers that were a 5xx or showed a stack trace."""


@pytest.fixture
def world(simple_checklists, settings, tmp_path):
    """Something for every operation to reach, for each role (see hostile.build_world)."""
    from tests.fuzz.hostile import build_world

    settings.MEDIA_ROOT = tmp_path
    return build_world(simple_checklists)


def tally(suite: str, operation: str, status: int, body: bytes) -> bool:
    """Count one request and its answer; True when the answer was a server error."""
    CASES[(suite, operation)] += 1
    failed = status >= 500 or any(marker in (body or b"") for marker in TRACE_MARKERS)
    if failed:
        SERVER_ERRORS[(suite, operation)] += 1
    return failed


def pytest_collection_modifyitems(config, items):
    """Schema cases run as each role the operation serves (hostile.roles_for); the harness's
    own check once, as the operator."""
    import re

    from tests.fuzz.hostile import roles_for

    keep, drop = [], []
    for item in items:
        role = getattr(item, "callspec", None) and item.callspec.params.get("role")
        if not role or item.module.__name__ != "tests.fuzz.test_schema_fuzz":
            keep.append(item)
            continue
        found = re.search(r"\[(\w+) (\S+)\]", item.name)
        wanted = roles_for(found[1], found[2]) if found else ("operator",)
        (keep if role in wanted else drop).append(item)
    if drop:
        config.hook.pytest_deselected(items=drop)
        items[:] = keep


def summary() -> dict:
    operations = sorted({op for _, op in CASES})
    return {
        "database": connection.vendor,
        "examples_setting": int(os.environ.get("PARAPET_FUZZ_EXAMPLES", "5")),
        "operations": len(operations),
        "cases": sum(CASES.values()),
        "server_errors": sum(SERVER_ERRORS.values()),
        "by_suite": {
            suite: {
                "cases": sum(n for (s, _), n in CASES.items() if s == suite),
                "server_errors": sum(n for (s, _), n in SERVER_ERRORS.items() if s == suite),
            }
            for suite in sorted({s for s, _ in CASES})
        },
        "by_operation": {
            op: {
                "cases": sum(n for (_, o), n in CASES.items() if o == op),
                "server_errors": sum(n for (_, o), n in SERVER_ERRORS.items() if o == op),
            }
            for op in operations
        },
    }


def pytest_terminal_summary(terminalreporter, exitstatus, config):
    if not CASES:
        return
    report = summary()
    path = Path(
        os.environ.get("PARAPET_FUZZ_SUMMARY", f"/tmp/parapet-fuzz-{report['database']}.json")
    )
    path.write_text(json.dumps(report, indent=2), encoding="utf-8")
    write = terminalreporter.write_line
    terminalreporter.section("fuzz tally")
    width = max(len(op) for op in report["by_operation"])
    for op, counts in report["by_operation"].items():
        write(f"{op:<{width}}  {counts['cases']:>6} cases  {counts['server_errors']} server errors")
    for suite, counts in report["by_suite"].items():
        write(f"suite {suite}: {counts['cases']} cases, {counts['server_errors']} server errors")
    write(
        f"{report['database']}: {report['cases']} cases over {report['operations']} operations, "
        f"{report['server_errors']} server errors (PARAPET_FUZZ_EXAMPLES="
        f"{report['examples_setting']}); written to {path}"
    )
