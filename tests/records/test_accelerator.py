"""reportlab's C accelerator (rl-accel) draws exactly what its pure Python code draws.

The verifier proves a record's pages by drawing them again, possibly on a machine without the
accelerator (an auditor's own checkout): the two must give the same bytes. Each function the
accelerator replaces is compared with reportlab's own Python version on generated input, and
the fixed documents of every record format are drawn in a process that refuses the
accelerator and must give the pinned page prints.
"""

import importlib.util
import math
import subprocess
import sys
from pathlib import Path

import pytest
import reportlab
from hypothesis import given, settings
from hypothesis import strategies as st

from compliance.records.pdf import _register_fonts
from tests.records.test_layout_stability import PINNED

ROOT = Path(__file__).resolve().parents[2]


def _both() -> tuple[dict, dict]:
    """reportlab's Python and C versions of the accelerated functions, side by side (its own
    testing switch makes it define both)."""
    spec = importlib.util.find_spec("reportlab.lib.rl_accel")
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    reportlab._rl_testing = True  # type: ignore[attr-defined]
    try:
        spec.loader.exec_module(module)
    finally:
        del reportlab._rl_testing  # type: ignore[attr-defined]
    return module._py_funcs, module._c_funcs


PY, C = _both()

numbers = st.one_of(
    st.floats(allow_nan=False, allow_infinity=False, min_value=-1e12, max_value=1e12),
    st.integers(min_value=-(10**9), max_value=10**9),
    st.sampled_from([0.0, -0.0, 1e-7, -1e-7, 1.1e-7, 0.5, 0.05, 0.9999995, 999999.5, 1e6]),
)


def test_the_accelerator_is_installed():
    assert set(C) >= {"fp_str", "escapePDF", "instanceStringWidthTTF", "calcChecksum"}


@settings(max_examples=3000, deadline=None)
@given(st.lists(numbers, min_size=1, max_size=6))
def test_numbers_are_written_the_same(values):
    assert C["fp_str"](*values) == PY["fp_str"](*values)
    assert C["fp_str"](values) == PY["fp_str"](values)


@settings(max_examples=1000, deadline=None)
@given(st.text(max_size=60))
def test_text_is_escaped_the_same(text):
    data = text.encode("latin-1", "replace").decode("latin-1")
    assert C["escapePDF"](data) == PY["escapePDF"](data)


@settings(max_examples=1000, deadline=None)
@given(st.text(max_size=60), st.sampled_from([6.5, 7.5, 8, 9, 10.5, 13, 18]))
def test_text_is_measured_the_same(text, size):
    from reportlab.pdfbase import pdfmetrics

    font = pdfmetrics.getFont(_register_fonts()[0])
    measured = C["instanceStringWidthTTF"](font, text, size)
    assert math.isclose(measured, PY["instanceStringWidthTTF"](font, text, size), abs_tol=0)


@settings(max_examples=500, deadline=None)
@given(st.binary(max_size=300))
def test_font_checksums_are_the_same(data):
    assert C["calcChecksum"](data) == PY["calcChecksum"](data)


@pytest.mark.parametrize("name", sorted(PINNED))
def test_without_the_accelerator_the_pages_are_the_pinned_ones(name):
    script = (
        "import sys; sys.modules['_rl_accel'] = None\n"
        "import hashlib, io, json\n"
        "from reportlab.lib import rl_accel\n"
        "assert rl_accel.fp_str.__module__ != '_rl_accel'\n"
        "from pypdf import PdfReader\n"
        "from compliance.records.page_check import page_prints\n"
        "from compliance.records.pdf import render\n"
        "from tests.records.test_layout_stability import DOCUMENTS, FIXTURES\n"
        f"pdf = render(DOCUMENTS[{name!r}], FIXTURES['seal'])\n"
        "prints = page_prints(PdfReader(io.BytesIO(pdf)))\n"
        "print(hashlib.sha256(json.dumps(prints, sort_keys=True).encode()).hexdigest())\n"
    )
    done = subprocess.run(
        [sys.executable, "-c", script], cwd=ROOT, capture_output=True, text=True, timeout=120
    )
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == PINNED[name]
