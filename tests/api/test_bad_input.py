"""Bad input gets a 400 naming the field, and nothing already stored changes."""

import json
import uuid
from pathlib import Path

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError
from django.urls import reverse

from checklists.models import Checklist, ChecklistVersion, CheckSheet, ItemEntry
from compliance.jobs.selectors import job_requirements
from compliance.models import (
    AnchorCertification,
    Equipment,
    Hold,
    Job,
    JobTransition,
    SyncReceipt,
)
from tests.conftest import PASSING, client_for
from tests.engineering.examples import SUCTION
from tests.factories import published_checklist, tick
from tests.factories import reading as reading_item

pytestmark = pytest.mark.django_db


def counts():
    return (
        CheckSheet.objects.count(),
        ItemEntry.objects.count(),
        Equipment.objects.count(),
        AnchorCertification.objects.count(),
        Job.objects.count(),
    )


def hose_of(job):
    return next(r for r in job_requirements(job) if r.subject.kind == "hose").subject.equipment


def post_sheet(client, job, version, entries, **extra):
    return client.post(
        reverse("sheet-list"),
        {"job": job.pk, "version": version.pk, "entries": entries, **extra},
        format="json",
    )


@pytest.mark.parametrize(
    ("entries", "field"),
    [
        (
            {**PASSING["hose"], "valve_pressure": {"value": 900, "unit": "kg"}},
            "entries.valve_pressure.unit",
        ),
        (
            {**PASSING["hose"], "valve_pressure": {"value": "900", "unit": "kPa"}},
            "entries.valve_pressure.value",
        ),
        ({**PASSING["hose"], "valve_pressure": {"value": True}}, "entries.valve_pressure.value"),
        ({"condition": {"value": "pass"}}, "entries.valve_pressure"),
        ({**PASSING["hose"], "condition": {"value": "maybe"}}, "entries.condition.value"),
        ({**PASSING["hose"], "condition": {"value": "na"}}, "entries.condition.value"),
        ({**PASSING["hose"], "mystery": {"value": 1}}, "entries.mystery"),
        ({**PASSING["hose"], "condition": "pass"}, "entries.condition"),
    ],
)
def test_bad_entries_name_the_field(job, simple_checklists, operator, entries, field):
    before = counts()
    response = post_sheet(
        client_for(operator), job, simple_checklists["hose"], entries, equipment=hose_of(job).pk
    )
    assert response.status_code == 400
    assert field in response.json(), response.json()
    assert counts() == before


def test_nan_reading_is_refused(job, simple_checklists, operator):
    client = client_for(operator)
    body = (
        f'{{"job": {job.pk}, "version": {simple_checklists["hose"].pk}, '
        f'"equipment": {hose_of(job).pk}, "entries": {{"condition": {{"value": "pass"}}, '
        '"valve_pressure": {"value": NaN, "unit": "kPa"}}}'
    )
    response = client.post(reverse("sheet-list"), body, content_type="application/json")
    assert response.status_code == 400
    assert response.json() == {"entries.valve_pressure.value": ["must be a finite number"]}
    assert CheckSheet.objects.count() == 0


def test_a_name_given_twice_in_one_object_is_refused(job, simple_checklists, operator):
    """JSON leaves a repeated name to the reader (RFC 8259 §4): Python's kept the last, so
    {"value": "fail", "value": "pass"} was stored as a pass that another reader sees as a fail."""
    client = client_for(operator)
    body = (
        f'{{"job": {job.pk}, "version": {simple_checklists["site"].pk}, "entries": '
        '{"zone_closed": {"value": "fail", "value": "pass"}}}'
    )
    response = client.post(reverse("sheet-list"), body, content_type="application/json")
    assert response.status_code == 400
    assert response.json() == {
        "detail": "JSON parse error - the name 'value' appears twice in one object."
    }
    assert CheckSheet.objects.count() == 0


def test_a_form_is_refused_where_json_is_read(job, supervisor):
    """A form keeps the last of a repeated name and reads a JSON-valued field past the JSON
    parser's checks: ratings={"mbs_kn": 30, "mbs_kn": 3} came in as a form field. Only the
    endpoints that take a file read a form."""
    client = client_for(supervisor)
    before = counts()
    body = {
        "kind": "safety_line",
        "label": "L-form",
        "ratings": '{"mbs_kn": 3, "ea_kn": 600, "kg_per_m": 0.07, "length_m": 200, "mbs_kn": 30}',
    }
    response = client.post(reverse("equipment-list"), body, format="multipart")
    assert response.status_code == 415
    response = client.post(reverse("equipment-list"), body, format="json")
    assert response.status_code == 400 and "ratings" in response.json()
    assert counts() == before


def test_a_name_given_twice_in_a_form_is_refused_by_name(job, supervisor):
    """The certificate form takes a file, so it reads a form: certifier=A&certifier=B stored B
    where the request (and a person reading it) also says A."""
    anchor = job.drops.first().anchor
    client = client_for(supervisor)
    before = counts()
    body = {
        "certifier": ["A. Honest", "B. Other"],
        "rated_capacity_kn": 20,
        "certified_on": "2026-01-01",
        "valid_until": "2027-01-01",
    }
    response = client.post(
        reverse("anchor-certifications", args=[anchor.pk]), body, format="multipart"
    )
    assert response.status_code == 400
    assert response.json() == {"certifier": ["The name 'certifier' appears twice in the form."]}
    assert counts() == before


@pytest.mark.parametrize("charset", ["utf-7", "utf-16", "unicode_escape", "latin-1"])
def test_json_in_another_charset_than_utf_8_is_refused(job, simple_checklists, operator, charset):
    """In UTF-7 the remark "grip +AGYAYQBpAGw- ok" was stored as "grip fail ok": the text
    read was not the text the bytes show. JSON is UTF-8 (RFC 8259 §8.1)."""
    body = json.dumps(
        {
            "job": job.pk,
            "version": simple_checklists["site"].pk,
            "entries": PASSING["site"],
            "remarks": "grip +AGYAYQBpAGw- ok",
        }
    ).encode("utf-8")
    response = client_for(operator).post(
        reverse("sheet-list"), body, content_type=f"application/json; charset={charset}"
    )
    assert response.status_code == 415
    assert CheckSheet.objects.count() == 0


def test_json_declared_utf_8_in_any_spelling_is_read(job, simple_checklists, operator):
    body = json.dumps(
        {"job": job.pk, "version": simple_checklists["site"].pk, "entries": PASSING["site"]}
    ).encode("utf-8")
    response = client_for(operator).post(
        reverse("sheet-list"), body, content_type="application/json; charset=UTF8"
    )
    assert response.status_code == 201, response.json()


def test_a_form_in_another_charset_than_utf_8_is_refused(job, supervisor):
    """In UTF-7 a certifier "+AEEAQwBNAEU- Rope Access" was stored as "ACME Rope Access"."""
    from django.test.client import BOUNDARY, encode_multipart

    anchor = job.drops.first().anchor
    before = counts()
    body = encode_multipart(
        BOUNDARY,
        {
            "certifier": "+AEEAQwBNAEU- Rope Access",
            "rated_capacity_kn": "30",
            "certified_on": "2026-01-01",
            "valid_until": "2027-01-01",
        },
    )
    response = client_for(supervisor).post(
        reverse("anchor-certifications", args=[anchor.pk]),
        body,
        content_type=f"multipart/form-data; boundary={BOUNDARY}; charset=utf-7",
    )
    assert response.status_code == 415
    assert counts() == before


def test_a_text_part_and_a_file_part_of_one_name_are_refused(job, operator):
    """image=text and image=@photo.png came through: the text and file parts were each
    checked for repeats apart."""
    import io

    from PIL import Image

    png = io.BytesIO()
    Image.new("RGB", (8, 8), "white").save(png, format="PNG")
    png.seek(0)
    png.name = "p.png"
    body = {"client_uuid": str(uuid.uuid4()), "job": job.pk, "image": ["text", png]}
    response = client_for(operator).post(reverse("photos"), body, format="multipart")
    assert response.status_code == 400
    assert response.json() == {"image": ["The name 'image' appears twice in the form."]}


def test_a_reading_in_another_accepted_unit_is_converted_and_kept_as_entered(
    job, simple_checklists, operator
):
    entries = {**PASSING["hose"], "valve_pressure": {"value": 9, "unit": "bar"}}
    response = post_sheet(
        client_for(operator), job, simple_checklists["hose"], entries, equipment=hose_of(job).pk
    )
    assert response.status_code == 201, response.json()
    entry = next(e for e in response.json()["entries"] if e["item_key"] == "valve_pressure")
    assert entry["value"] == pytest.approx(900.0) and entry["unit"] == "kPa"
    assert entry["working"]["as_entered"] == {"value": 9, "unit": "bar"}


def test_unknown_equipment_is_refused(job, simple_checklists, operator):
    before = counts()
    response = post_sheet(
        client_for(operator), job, simple_checklists["hose"], PASSING["hose"], equipment=999999
    )
    assert response.status_code == 400 and "equipment" in response.json()
    # equipment of the wrong kind names the field too
    robot = next(r for r in job_requirements(job) if r.subject.kind == "robot").subject.equipment
    response = post_sheet(
        client_for(operator), job, simple_checklists["hose"], PASSING["hose"], equipment=robot.pk
    )
    assert response.status_code == 400 and "equipment" in response.json()
    assert counts() == before


def test_negative_capacity_and_bad_dates_are_refused(job, supervisor):
    anchor = job.drops.first().anchor
    url = reverse("anchor-certifications", args=[anchor.pk])
    client = client_for(supervisor)
    before = counts()
    for body, field in [
        (
            {
                "certifier": "P",
                "rated_capacity_kn": -5,
                "certified_on": "2026-01-01",
                "valid_until": "2027-01-01",
            },
            "rated_capacity_kn",
        ),
        (
            {
                "certifier": "P",
                "rated_capacity_kn": "lots",
                "certified_on": "2026-01-01",
                "valid_until": "2027-01-01",
            },
            "rated_capacity_kn",
        ),
        (
            {
                "certifier": "P",
                "rated_capacity_kn": 20,
                "certified_on": "2026-01-01",
                "valid_until": "2025-01-01",
            },
            "valid_until",
        ),
        (
            {"rated_capacity_kn": 20, "certified_on": "2026-01-01", "valid_until": "2027-01-01"},
            "certifier",
        ),
        (
            {
                "certifier": "P",
                "rated_capacity_kn": 20,
                "certified_on": "01/01/2026",
                "valid_until": "2027-01-01",
            },
            "certified_on",
        ),
    ]:
        response = client.post(url, body, format="json")
        assert response.status_code == 400, body
        assert field in response.json(), (body, response.json())
    assert counts() == before
    ok = client.post(
        url,
        {
            "certifier": "P",
            "rated_capacity_kn": 20,
            "certified_on": "2026-01-01",
            "valid_until": "2027-01-01",
        },
        format="json",
    )
    assert ok.status_code == 201


def test_equipment_ratings_are_checked_per_kind(job, supervisor):
    client = client_for(supervisor)
    before = counts()
    response = client.post(
        reverse("equipment-list"),
        {
            "kind": "hose",
            "label": "H-9",
            "ratings": {
                "id_mm": -12,
                "rating_kpa": "high",
                "kg_per_m": 0.1,
                "length_m": 100,
                "colour": "red",
            },
        },
        format="json",
    )
    assert response.status_code == 400
    body = response.json()
    assert {"ratings.id_mm", "ratings.rating_kpa", "ratings.roughness_mm", "ratings.colour"} <= set(
        body
    )
    assert counts() == before
    response = client.post(
        reverse("equipment-list"), {"kind": "crane", "label": "C", "ratings": {}}, format="json"
    )
    assert response.status_code == 400 and "kind" in response.json()


def test_an_equipment_rating_beyond_a_float_is_a_400_naming_it(job, supervisor):
    """10**400 is a valid JSON integer; math.isfinite() raised OverflowError on it (a 500)."""
    before = counts()
    body = (
        '{"kind": "hose", "label": "H-10", "ratings": {"id_mm": 12, "rating_kpa": '
        + HUGE
        + ', "kg_per_m": 0.1, "length_m": 100, "roughness_mm": 0.0015}}'
    )
    response = client_for(supervisor).post(
        reverse("equipment-list"), body, content_type="application/json"
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json()["ratings.rating_kpa"] == ["Must be a finite number."]
    assert counts() == before


def test_the_same_sheet_sent_twice_is_stored_once(job, simple_checklists, operator):
    client = client_for(operator)
    key = str(uuid.uuid4())
    first = post_sheet(client, job, simple_checklists["site"], PASSING["site"], client_uuid=key)
    again = post_sheet(client, job, simple_checklists["site"], PASSING["site"], client_uuid=key)
    assert (first.status_code, again.status_code) == (201, 200)
    assert first.json()["id"] == again.json()["id"]
    assert CheckSheet.objects.filter(client_uuid=key).count() == 1


def test_a_stored_sheet_cannot_be_edited_through_the_api(job, simple_checklists, operator):
    client = client_for(operator)
    sheet = post_sheet(client, job, simple_checklists["site"], PASSING["site"]).json()
    url = reverse("sheet-detail", args=[sheet["id"]])
    assert client.put(url, {}, format="json").status_code == 405
    assert client.patch(url, {"verdict": "pass"}, format="json").status_code == 405
    assert client.delete(url).status_code == 405


def test_start_blocked_answers_409_with_reasons(job, simple_checklists, operator):
    response = client_for(operator).post(reverse("job-start", args=[job.pk]))
    assert response.status_code == 409
    body = response.json()
    assert body["detail"] == "This job cannot start yet."
    assert {r["code"] for r in body["reasons"]} == {"sheet_missing"}
    assert all(r["message"] and r["requirement"] for r in body["reasons"])
    job.refresh_from_db()
    assert job.state == "planned"


# Finite JSON that Python cannot hold as a float ------------------------------------------
# Python's json reads an integer of any length; 10**400 is beyond binary64 (IEEE 754-2019,
# largest finite about 1.8e308). 1e307 bar is 1e309 kPa once converted: infinite.

HUGE = "1" + "0" * 400
FIXTURES = Path(__file__).resolve().parents[2] / "fixtures"


def everything():
    """Counts of every record a sheet or a sync batch could leave behind."""
    return (
        *counts(),
        SyncReceipt.objects.count(),
        Hold.objects.count(),
        JobTransition.objects.count(),
    )


def raw_sheet(job, version, equipment, valve_pressure: str, unit: str = "kPa") -> str:
    return (
        f'{{"job": {job.pk}, "version": {version.pk}, "equipment": {equipment.pk}, '
        '"entries": {"condition": {"value": "pass"}, '
        f'"valve_pressure": {{"value": {valve_pressure}, "unit": "{unit}"}}}}}}'
    )


@pytest.mark.parametrize(
    ("value", "unit", "field"),
    [
        (HUGE, "kPa", "entries.valve_pressure.value"),
        ("-" + HUGE, "kPa", "entries.valve_pressure.value"),
        ("1e307", "bar", "entries.valve_pressure.value"),
        ("-1e307", "bar", "entries.valve_pressure.value"),
    ],
    ids=["10**400 kPa", "-10**400 kPa", "1e307 bar", "-1e307 bar"],
)
def test_a_reading_beyond_a_float_is_a_400_and_stores_nothing(
    job, simple_checklists, operator, value, unit, field
):
    before = everything()
    response = client_for(operator).post(
        reverse("sheet-list"),
        raw_sheet(job, simple_checklists["hose"], hose_of(job), value, unit),
        content_type="application/json",
    )
    assert response.status_code == 400, response.content[:300]
    body = response.json()
    assert field in body, body
    assert "finite" in body[field][0] or "beyond" in body[field][0], body
    assert everything() == before


def test_a_sync_batch_with_a_huge_reading_rejects_that_record_and_stores_nothing(
    job, simple_checklists, operator
):
    before = everything()
    sheet = raw_sheet(job, simple_checklists["hose"], hose_of(job), HUGE)
    body = f'{{"records": [{{"type": "sheet", "client_uuid": "{uuid.uuid4()}", "data": {sheet}}}]}}'
    response = client_for(operator).post(reverse("sync"), body, content_type="application/json")
    assert response.status_code == 200, response.content[:300]
    (result,) = response.json()["results"]
    assert result["status"] == "rejected"
    assert "entries.valve_pressure.value" in result["errors"], result
    assert everything() == before


@pytest.mark.parametrize(
    ("limit", "reading"),
    [(1e-300, 1e10), (1e308, -1e308), (-1.7e308, 1.7e308)],
    ids=["margin over a tiny limit", "1e308 apart", "1.7e308 apart"],
)
def test_a_reading_whose_margin_overflows_is_a_400_and_stores_nothing(
    job, operator, limit, reading
):
    """Before, the sheet was stored with an infinite margin and the answer was a 500; every
    later read of it failed the same way."""
    version = published_checklist(
        "hose-limit",
        "hose",
        [tick("condition"), reading_item("valve_pressure", "kPa", {"min": {"value": limit}})],
    )
    before = everything()
    response = post_sheet(
        client_for(operator),
        job,
        version,
        {"condition": {"value": "pass"}, "valve_pressure": {"value": reading}},
        equipment=hose_of(job).pk,
    )
    assert response.status_code == 400, response.content[:300]
    assert "entries.valve_pressure.value" in response.json(), response.json()
    assert everything() == before


def test_a_huge_series_sample_names_the_sample(job, operator):
    series = {
        "key": "decay_series",
        "kind": "series",
        "label": "decay series",
        "reason": "test",
        "blocking": True,
        "unit": "kPa",
    }
    version = published_checklist("robot-series", "robot", [tick("stops_work"), series])
    robot = next(r for r in job_requirements(job) if r.subject.kind == "robot").subject.equipment
    body = (
        f'{{"job": {job.pk}, "version": {version.pk}, "equipment": {robot.pk}, "entries": '
        '{"stops_work": {"value": "pass"}, "decay_series": {"value": '
        f"[[0, 60], [{HUGE}, 59], [120, 58], [180, 57]]}}}}}}"
    )
    before = everything()
    response = client_for(operator).post(
        reverse("sheet-list"), body, content_type="application/json"
    )
    assert response.status_code == 400, response.content[:300]
    assert "entries.decay_series.value[1][0]" in response.json(), response.json()
    assert everything() == before


@pytest.mark.parametrize("bound", ["min", "max"])
@pytest.mark.parametrize(
    ("literal", "where"),
    [(HUGE, "limit"), ("-" + HUGE, "limit"), ('"lots"', "limit"), ("1e999", "items")],
    ids=["10**400", "-10**400", "text", "1e999"],
)
def test_a_checklist_limit_must_be_a_finite_number(job, supervisor, bound, literal, where):
    """A literal limit that is not a finite number would fail every sheet filled against it
    with a 500; the draft is refused naming the limit (1e999, infinite once parsed, is
    already refused by the serializer's JSON field, naming the items)."""
    checklist = Checklist.objects.create(
        key="own-hose", title="Own hose", applies_to="hose", organisation=job.organisation
    )
    items = (
        '[{"key": "valve_pressure", "kind": "reading", "label": "valve pressure", '
        f'"reason": "test", "blocking": true, "unit": "kPa", "limits": {{"{bound}": '
        f'{{"value": {literal}}}}}}}]'
    )
    before = ChecklistVersion.objects.count()
    response = client_for(supervisor).post(
        reverse("checklist-versions", args=[checklist.pk]),
        f'{{"items": {items}}}',
        content_type="application/json",
    )
    assert response.status_code == 400, response.content[:300]
    field = f"items[0].limits.{bound}" if where == "limit" else "items"
    assert field in response.json(), response.json()
    assert ChecklistVersion.objects.count() == before


@pytest.mark.parametrize("name", ["calc", "sheet-list", "sync"])
def test_json_nested_too_deeply_is_a_400(job, operator, name):
    """Python's json decoder raises RecursionError, not ValueError, past about 1000 levels."""
    url = reverse(name, args=["water-line"]) if name == "calc" else reverse(name)
    body = '{"entries": ' + "[" * 100_000 + "]" * 100_000 + "}"
    before = everything()
    response = client_for(operator).post(url, body, content_type="application/json")
    assert response.status_code == 400, response.content[:300]
    assert "nested" in response.json()["detail"]
    assert everything() == before


@pytest.mark.parametrize(
    ("field", "value"), [("vacuum_kpa", HUGE), ("cups", HUGE), ("mass_kg", "-" + HUGE)]
)
def test_calc_endpoint_refuses_an_integer_beyond_a_float(job, operator, field, value):
    inputs = dict(SUCTION)
    text = json.dumps({**inputs, field: 123456.5}).replace("123456.5", value)
    response = client_for(operator).post(
        reverse("calc", args=["suction-hold"]), text, content_type="application/json"
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {field: ["must be a finite number"]}


def test_calc_endpoint_answers_out_of_range_as_a_failing_verdict(job, operator):
    """The first shared out-of-range case: an infinite Reynolds number over a smooth wall."""
    cases = json.loads((FIXTURES / "calc_out_of_range.json").read_text(encoding="utf-8"))
    case = next(c for c in cases["cases"] if c["quantity"] == "reynolds")
    response = client_for(operator).post(
        reverse("calc", args=[case["calc"]]), case["inputs"], format="json"
    )
    assert response.status_code == 200, response.content[:300]
    body = response.json()
    assert (body["verdict"], body["governing"], body["margin"]) == ("fail", "out_of_range", None)
    assert "reynolds" in body["reason"]


@pytest.mark.parametrize(
    ("text", "says"),
    [
        ('{"vacuum_kpa": ' + HUGE + "}", "vacuum_kpa: must be a finite number"),
        ('{"vacuum_kpa": ' + "[" * 100_000 + "]" * 100_000 + "}", "input: "),
    ],
    ids=["10**400", "nested too deeply"],
)
def test_calc_command_refuses_with_the_field(text, says):
    with pytest.raises(CommandError) as caught:
        call_command("calc", "suction-hold", "--input", text)
    assert str(caught.value).startswith(says), str(caught.value)


def test_a_calc_input_literal_beyond_a_float_is_refused_naming_it(job, supervisor):
    checklist = Checklist.objects.create(
        key="own-robot", title="Own robot", applies_to="robot", organisation=job.organisation
    )
    item = (
        '{"key": "hold", "kind": "calc", "label": "hold", "reason": "test", "blocking": true, '
        '"calc": "suction-hold", "inputs": {"vacuum_kpa": {"value": 60}, '
        f'"cups": {{"value": {HUGE}}}, "cup_diameter_m": {{"robot": "cup_diameter_m"}}, '
        '"friction": {"robot": "friction"}, "mass_kg": {"robot": "mass_kg"}}}'
    )
    before = ChecklistVersion.objects.count()
    response = client_for(supervisor).post(
        reverse("checklist-versions", args=[checklist.pk]),
        f'{{"items": [{item}]}}',
        content_type="application/json",
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"items[0].inputs.cups": ["A literal value is a finite number."]}
    assert ChecklistVersion.objects.count() == before


@pytest.mark.parametrize("literal", ["NaN", "Infinity", "-Infinity"])
def test_a_non_finite_literal_in_a_batch_is_refused_naming_where_it_is(
    job, simple_checklists, operator, literal
):
    """Python's parser reads NaN and Infinity, JSON has no such tokens (RFC 8259 §6); the
    batch is refused with the place of the first one, and nothing of it is stored."""
    good = {
        "type": "sheet",
        "client_uuid": str(uuid.uuid4()),
        "data": {"job": job.pk, "version": simple_checklists["site"].pk, "entries": {}},
    }
    body = json.dumps({"records": [good, good]}).replace(
        '"entries": {}', '"entries": {"wind": {"value": ' + literal + "}}", 1
    )
    before = counts()
    response = client_for(operator).post(reverse("sync"), body, content_type="application/json")
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"records[0].data.entries.wind.value": ["must be a finite number"]}
    assert counts() == before
    assert SyncReceipt.objects.count() == 0


def test_a_non_finite_literal_in_a_list_or_as_the_whole_body_is_named_too(operator):
    client = client_for(operator)
    response = client.post(reverse("sync"), "NaN", content_type="application/json")
    assert response.status_code == 400
    assert response.json() == {"body": ["must be a finite number"]}
    response = client.post(
        reverse("sync"), '{"records": [1, [2, Infinity]]}', content_type="application/json"
    )
    assert response.status_code == 400
    assert response.json() == {"records[1][1]": ["must be a finite number"]}


def test_a_non_finite_literal_at_the_deepest_nesting_the_decoder_takes_is_still_a_400(operator):
    client = client_for(operator)
    for depth in (200, 500, 900, 980):
        body = "[" * depth + "NaN" + "]" * depth
        response = client.post(reverse("sync"), body, content_type="application/json")
        assert response.status_code == 400, (depth, response.content[:200])


# Fields the client may not set, and ids --------------------------------------------------------

READ_ONLY_FIELD = ["This field is read-only."]


def job_body(job, **change):
    return {
        "site": job.site_id,
        "date": job.date.isoformat(),
        "supervisor": job.supervisor_id,
        **change,
    }


def test_a_job_sent_with_its_state_is_refused_naming_the_state(job, supervisor):
    """The state was dropped without a word: a job sent as closed was stored as planned."""
    before = everything()
    response = client_for(supervisor).post(
        reverse("job-list"), job_body(job, state="closed"), format="json"
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"state": READ_ONLY_FIELD}
    assert everything() == before


def test_read_only_and_unknown_fields_are_named_together(job, supervisor):
    response = client_for(supervisor).post(
        reverse("job-list"),
        job_body(job, id=5, site_name="Elsewhere", colour="red"),
        format="json",
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {
        "colour": ["Unknown field."],
        "id": READ_ONLY_FIELD,
        "site_name": READ_ONLY_FIELD,
    }


def test_a_draft_cannot_be_published_by_setting_its_status(job, supervisor):
    from checklists import services as checklist_services

    checklist = checklist_services.create_checklist(
        by=supervisor, key="own-hose", title="Own hose", applies_to="hose"
    )
    draft = checklist_services.create_draft(
        checklist=checklist, items=[tick("condition")], by=supervisor
    )
    response = client_for(supervisor).patch(
        reverse("checklist-version-detail", args=[draft.pk]), {"status": "published"}, format="json"
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"status": READ_ONLY_FIELD}
    draft.refresh_from_db()
    assert draft.status == "draft"


def test_a_checklist_cannot_be_made_a_default_by_saying_so(job, supervisor):
    before = Checklist.objects.count()
    response = client_for(supervisor).post(
        reverse("checklist-list"),
        {"key": "own", "title": "Own", "applies_to": "hose", "default": True},
        format="json",
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"default": READ_ONLY_FIELD}
    assert Checklist.objects.count() == before


@pytest.mark.parametrize("site", [1.5, -0.5, True])
def test_an_id_is_a_whole_number(job, supervisor, site):
    """1.5 was looked up as 1, the site of that id."""
    kind = "bool" if site is True else "float"
    before = everything()
    response = client_for(supervisor).post(
        reverse("job-list"), job_body(job, site=site), format="json"
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"site": [f"Incorrect type. Expected pk value, received {kind}."]}
    assert everything() == before


def test_a_fractional_id_in_a_plan_check_is_refused_too(job, supervisor):
    robot = job.drops.get().robot_id
    response = client_for(supervisor).post(
        reverse("job-plan-check", args=[job.pk]), {"robot": robot + 0.5}, format="json"
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"robot": ["Incorrect type. Expected pk value, received float."]}


def test_renaming_equipment_to_a_label_in_use_names_the_label(job, supervisor):
    """The model's unique constraint answered under __all__."""
    drop = job.drops.get()
    tether = drop.tether
    response = client_for(supervisor).patch(
        reverse("equipment-detail", args=[tether.pk]), {"label": drop.hose.label}, format="json"
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"label": ["Your organisation already has equipment of this label."]}
    label = tether.label
    tether.refresh_from_db()
    assert tether.label == label


def test_a_second_site_of_one_name_is_still_named_by_its_name(job, supervisor):
    body = {
        "name": job.site.name,
        "height_m": 50,
        "profile": job.site.profile.key,
    }
    response = client_for(supervisor).post(reverse("site-list"), body, format="json")
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"name": ["Your organisation already has a site of this name."]}
