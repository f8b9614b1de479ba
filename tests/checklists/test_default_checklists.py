"""Default checklists end to end: calc items draw on readings and ratings and show working."""

import pytest
from django.core.management import call_command

from checklists.models import ItemEntry
from compliance.demo import load_demo
from compliance.models import DailyRecord, Hold, Job, Organisation, User
from compliance.records.checks import verify_pdf

pytestmark = pytest.mark.django_db


@pytest.fixture
def demo(tmp_path, settings):
    settings.MEDIA_ROOT = tmp_path
    return load_demo()


def test_demo_history_has_a_hold_and_its_repair(demo):
    jobs = list(Job.objects.filter(organisation=demo).order_by("date"))
    assert [j.state for j in jobs] == ["closed", "closed", "planned"]
    held_day = jobs[1]
    hold = Hold.objects.get(job=held_day)
    assert hold.item_key == "decay_test" and hold.clearance.sheet.verdict == "pass"
    assert [(t.from_state, t.to_state) for t in held_day.transitions.all()][3:5] == [
        ("working", "held"),
        ("held", "cleared"),
    ]
    assert DailyRecord.objects.filter(site__name="Larkfield Tower").count() == 2


def test_loading_the_demo_twice_changes_nothing(demo):
    counts = (
        Organisation.objects.count(),
        User.objects.count(),
        Job.objects.count(),
        ItemEntry.objects.count(),
    )
    load_demo()
    assert (
        Organisation.objects.count(),
        User.objects.count(),
        Job.objects.count(),
        ItemEntry.objects.count(),
    ) == counts


def test_calc_items_show_their_working_and_inputs_from_ratings(demo):
    hold_margin = ItemEntry.objects.filter(item_key="hold_margin").first()
    working = hold_margin.working
    assert working["name"] == "suction-hold" and working["verdict"] == "pass"
    assert working["inputs"]["cup_diameter_m"] == 0.2  # the robot's rating in the demo
    assert working["inputs"]["vacuum_kpa"] == 62.0  # the operator's reading
    assert any("clamp force" in step for step in working["steps"])
    assert "does not replace" in working["caution"] or "not replace" in working["caution"]
    decay = ItemEntry.objects.filter(item_key="decay_test", verdict="fail").get()
    assert decay.blocking and decay.working["governing"] == "hold_time"
    assert decay.working["inputs"]["min_vacuum_kpa"] == pytest.approx(
        ItemEntry.objects.filter(sheet=decay.sheet, item_key="hold_margin")
        .get()
        .value["min_vacuum_kpa"]
    )
    for key in ("wind_load", "arrest", "line_pressure", "suspended_mass", "forecast_at_height"):
        entry = ItemEntry.objects.filter(item_key=key).first()
        assert entry is not None and entry.working["steps"], key


def test_demo_records_verify(demo):
    from compliance.records.files import ensure_pdf

    for record in DailyRecord.objects.all():
        with ensure_pdf(record).file.open("rb") as handle:
            assert verify_pdf(handle.read()).ok


def test_demo_command_loads_and_prints_logins(capsys, tmp_path, settings):
    settings.MEDIA_ROOT = tmp_path
    call_command("demo", "--no-serve")
    out = capsys.readouterr().out
    assert "tomas" in out and "parapet-demo-2026" in out and "does not replace" in out
