"""A photo joins its day's record only while the record is open: before it is sealed, on the
job's day, for one of the job's sheets and an item of that sheet's checklist; a photo sent
without a sheet names a photo item of a checklist the job uses, or no item."""

import datetime as dt
import io
import uuid

import pytest
from django.urls import reverse
from django.utils import timezone
from PIL import Image

from checklists.models import Photo
from checklists.services import record_sheet
from compliance import clock
from compliance.jobs.services import close_job, start_job
from compliance.records.services import sign_daily_record, verify_against_database
from compliance.records.signing import create_self_signed
from tests.conftest import PASSING, client_for, fill_all
from tests.factories import (
    PASSWORD,
    JobFactory,
    OrganisationFactory,
    make_drop,
    published_checklist,
    tick,
)

pytestmark = pytest.mark.django_db


@pytest.fixture(autouse=True)
def _media(settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path


def _png(colour: tuple[int, int, int] = (200, 30, 30)) -> io.BytesIO:
    data = io.BytesIO()
    Image.new("RGB", (64, 48), colour).save(data, format="PNG")
    data.seek(0)
    data.name = "defect.png"
    return data


def _post(user, job, **fields):
    body = {"client_uuid": str(uuid.uuid4()), "job": job.pk, "image": _png(), **fields}
    return client_for(user).post(reverse("photos"), body, format="multipart")


def _nothing_stored(tmp_path) -> bool:
    return not Photo.objects.exists() and not [p for p in tmp_path.rglob("*") if p.is_file()]


def test_a_photo_for_a_signed_day_is_refused_and_the_record_still_verifies(
    signed, closed_job, operator, tmp_path
):
    """It was stored, and the server's check of the genuine signed record then said its rows
    were changed after sealing (record.photos): any operator could make it read as tampered."""
    sheet = closed_job.sheets.get(subject_kind="anchor", anchor=closed_job.drops.get().anchor)
    with clock.replaying(closed_job.date):  # on the day: the seal alone refuses it
        response = _post(operator, closed_job, sheet_uuid=str(sheet.client_uuid), item_key="sound")
    assert response.status_code == 400
    assert response.json() == {
        "job": ["This day's record is signed: a photo can no longer be added to it."]
    }
    assert _nothing_stored(tmp_path)
    assert verify_against_database(signed) == []


def test_a_photo_stored_before_the_seal_is_answered_again_after_it(
    closed_job, operator, supervisor
):
    """The phone resends a photo whose answer it lost: the stored copy, as before."""
    sheet = closed_job.sheets.get(subject_kind="anchor", anchor=closed_job.drops.get().anchor)
    body = {"sheet_uuid": str(sheet.client_uuid), "item_key": "sound"}
    key = str(uuid.uuid4())
    with clock.replaying(closed_job.date):
        first = _post(operator, closed_job, client_uuid=key, **body)
    assert first.status_code == 201, first.json()
    record = sign_daily_record(
        job=closed_job, by=supervisor, password=PASSWORD, meaning="reviewed_safe"
    )
    again = _post(operator, closed_job, client_uuid=key, **body)
    assert again.status_code == 200
    assert again.json() == first.json()
    assert verify_against_database(record) == []


@pytest.mark.parametrize("other", ["image", "item_key", "sheet_uuid"])
def test_another_photo_under_a_used_id_is_refused_naming_it(closed_job, operator, other):
    """Another image sent under a photo's id was answered 200 with the stored photo, and the
    new image silently dropped."""
    sheet = closed_job.sheets.get(subject_kind="anchor", anchor=closed_job.drops.get().anchor)
    body = {"sheet_uuid": str(sheet.client_uuid), "item_key": "sound"}
    key = str(uuid.uuid4())
    with clock.replaying(closed_job.date):
        first = _post(operator, closed_job, client_uuid=key, **body)
        assert first.status_code == 201, first.json()
        changed = {
            "image": {"image": _png((20, 30, 200))},
            "item_key": {"item_key": "tag_capacity"},
            "sheet_uuid": {"sheet_uuid": str(uuid.uuid4())},
        }[other]
        again = _post(operator, closed_job, client_uuid=key, **{**body, **changed})

    assert again.status_code == 400
    assert list(again.json()) == ["client_uuid"]
    assert Photo.objects.count() == 1


@pytest.mark.parametrize("same", [True, False], ids=["same-photo", "other-image"])
def test_a_photo_whose_id_is_taken_in_a_race_is_compared_as_one_sent_again(
    closed_job, operator, monkeypatch, tmp_path, same
):
    """Two requests under one id at once: the second's lookup saw no row, and its insert then
    met the first's. It was answered as the stored photo whatever it held, and its file stayed
    in storage without a row; it is compared as a photo sent again is, and leaves no file."""
    import checklists.photos as photos

    sheet = closed_job.sheets.get(subject_kind="anchor", anchor=closed_job.drops.get().anchor)
    body = {"sheet_uuid": str(sheet.client_uuid), "item_key": "sound"}
    key = str(uuid.uuid4())
    with clock.replaying(closed_job.date):
        first = _post(operator, closed_job, client_uuid=key, **body)
        assert first.status_code == 201, first.json()
        real = photos._stored

        def unseen(client_uuid):  # the lookup ran before the other request's insert
            monkeypatch.setattr(photos, "_stored", real)
            return None

        monkeypatch.setattr(photos, "_stored", unseen)
        image = _png() if same else _png((20, 30, 200))
        again = _post(operator, closed_job, client_uuid=key, image=image, **body)

    if same:
        assert again.status_code == 200
        assert again.json() == first.json()
    else:
        assert again.status_code == 400
        assert again.json() == {"client_uuid": [photos.REUSED_PHOTO_ID]}
    assert Photo.objects.count() == 1
    assert [p.name for p in tmp_path.rglob("*") if p.is_file()] == [f"{key}.jpg"]


def test_a_multi_picture_jpeg_is_stored_as_its_first_picture(closed_job, operator):
    """Some phone cameras write JPEGs holding more than one picture (the Multi-Picture format):
    they were refused as "not a JPEG, PNG or WebP image"."""
    sheet = closed_job.sheets.get(subject_kind="anchor", anchor=closed_job.drops.get().anchor)
    out = io.BytesIO()
    first, second = (Image.new("RGB", (64, 48), c) for c in ((200, 30, 30), (30, 30, 200)))
    first.save(out, format="MPO", save_all=True, append_images=[second])
    out.seek(0)
    out.name = "defect.jpg"
    with clock.replaying(closed_job.date):
        response = _post(
            operator, closed_job, image=out, sheet_uuid=str(sheet.client_uuid), item_key="sound"
        )
    assert response.status_code == 201, response.json()
    stored = Photo.objects.get()
    with Image.open(stored.image) as kept:
        assert (kept.format, kept.size) == ("JPEG", (64, 48))
        assert kept.getpixel((10, 10))[0] > 150  # the first picture, the red one


def test_a_photo_whose_row_fails_to_save_leaves_no_file(closed_job, operator, tmp_path):
    """Only a duplicate id took its file away; any other failure of the row's insert left the
    file in storage with no row to name it."""
    from django.db import OperationalError

    import checklists.photos as photos

    sheet = closed_job.sheets.get(subject_kind="anchor", anchor=closed_job.drops.get().anchor)

    def refused(self, *args, **kwargs):
        raise OperationalError("disk I/O error")

    from django.core.files.uploadedfile import SimpleUploadedFile

    image = SimpleUploadedFile("defect.png", _png().getvalue())
    with (
        clock.replaying(closed_job.date),
        pytest.raises(OperationalError),
        pytest.MonkeyPatch.context() as patch,
    ):
        patch.setattr(photos.Photo, "save", refused)
        photos.store_photo(
            by=operator,
            job=closed_job,
            image=image,
            client_uuid=uuid.uuid4(),
            sheet_uuid=sheet.client_uuid,
            item_key="sound",
        )
    assert _nothing_stored(tmp_path)


def test_a_photo_is_refused_on_any_day_but_the_jobs(closed_job, operator, tmp_path):
    """A loose photo counts as made the day it is received; the job's day has passed (and a
    later job's has not come)."""
    today = timezone.localdate()
    response = _post(operator, closed_job)
    assert response.status_code == 400
    assert response.json() == {
        "job": [
            f"This job is for {closed_job.date.isoformat()}: its photos are taken on its day,"
            f" and this one was made on {today.isoformat()}."
        ]
    }
    tomorrow = JobFactory(
        site=closed_job.site,
        supervisor=closed_job.supervisor,
        date=today + dt.timedelta(days=1),
    )
    assert _post(operator, tomorrow).json() == {
        "job": [
            f"This job is for {tomorrow.date.isoformat()}: its photos are taken on its day,"
            f" and this one was made on {today.isoformat()}."
        ]
    }
    assert _nothing_stored(tmp_path)


def test_a_photo_sent_the_morning_after_keeps_its_sheets_day(simple_checklists, operator):
    """Filled offline on the roof and sent the next morning, the sheet was made on its day, and
    so was the photo taken for it (the phone sends sheets first, then their photos)."""
    yesterday = JobFactory(date=timezone.localdate() - dt.timedelta(days=1))
    make_drop(yesterday)
    fill_time = timezone.make_aware(dt.datetime.combine(yesterday.date, dt.time(7, 5)))
    with clock.replaying(yesterday.date):
        sheet, _ = record_sheet(
            job=yesterday,
            version=simple_checklists["site"],
            by=yesterday.supervisor,
            entries=PASSING["site"],
            device_time=fill_time,
            phone_clock_offset_s=0,
        )
    response = _post(
        yesterday.supervisor,
        yesterday,
        sheet_uuid=str(sheet.client_uuid),
        item_key="zone_closed",
    )
    assert response.status_code == 201, response.json()


def test_a_photo_names_a_sheet_of_its_job_and_an_item_of_that_sheet(
    closed_job, simple_checklists, operator, tmp_path
):
    sheet = closed_job.sheets.get(subject_kind="anchor", anchor=closed_job.drops.get().anchor)
    other = JobFactory(site=closed_job.site, supervisor=closed_job.supervisor)
    make_drop(other)
    others, _ = record_sheet(
        job=other, version=simple_checklists["site"], by=operator, entries=PASSING["site"]
    )
    with clock.replaying(closed_job.date):
        for named in (others.client_uuid, uuid.uuid4()):
            response = _post(operator, closed_job, sheet_uuid=str(named), item_key="sound")
            assert response.status_code == 400
            assert response.json() == {"sheet_uuid": ["This job has no sheet with this id."]}
        response = _post(
            operator, closed_job, sheet_uuid=str(sheet.client_uuid), item_key="roof_wind"
        )
    assert response.status_code == 400
    assert response.json() == {"item_key": ["This sheet's checklist has no item with this key."]}
    assert _nothing_stored(tmp_path)


def photo_item(key: str) -> dict:
    return {"key": key, "kind": "photo", "label": key.replace("_", " "), "reason": "test"}


NO_PHOTO_ITEM = "No checklist this job uses has a photo item with this key."


def test_a_loose_photo_names_a_photo_item_of_a_checklist_its_job_uses(
    job, simple_checklists, operator, tmp_path
):
    """A photo sent without a sheet took any item key, and the signed record prints the key
    under the photo as the item it shows: a tick's key ("sound") or any words at all."""
    published_checklist(
        "anchor-photos", "anchor", [tick("tag_legible"), photo_item("anchor_photo")]
    )
    published_checklist(
        "their-photos", "site", [photo_item("their_photo")], organisation=OrganisationFactory()
    )
    with clock.replaying(job.date):
        # a tick of a checklist the job uses, a tick beside a photo item, another
        # organisation's photo item, no item at all
        for key in ("sound", "tag_legible", "their_photo", "no_such_item"):
            response = _post(operator, job, item_key=key)
            assert response.status_code == 400, (key, response.json())
            assert response.json() == {"item_key": [NO_PHOTO_ITEM]}
        assert _nothing_stored(tmp_path)
        named = _post(operator, job, item_key="anchor_photo")
        unnamed = _post(operator, job)
    assert (named.status_code, unnamed.status_code) == (201, 201)
    assert sorted(Photo.objects.values_list("item_key", flat=True)) == ["", "anchor_photo"]


def test_a_loose_photo_of_a_job_without_drops_names_a_site_photo_item(
    job, simple_checklists, operator, tmp_path
):
    """A job with no drop yet uses only the site's checklists: an anchor's photo item is not
    one of its items."""
    bare = JobFactory(site=job.site, supervisor=job.supervisor, date=job.date)
    published_checklist("anchor-photos", "anchor", [photo_item("anchor_photo")])
    published_checklist("site-photos", "site", [photo_item("zone_photo")])
    with clock.replaying(bare.date):
        response = _post(operator, bare, item_key="anchor_photo")
        assert response.status_code == 400
        assert response.json() == {"item_key": [NO_PHOTO_ITEM]}
        assert _nothing_stored(tmp_path)
        response = _post(operator, bare, item_key="zone_photo")
    assert response.status_code == 201, response.json()


# A failure kept after its job's day keeps its photos: the evidence of a failure is not lost.

RESET = dt.datetime(2000, 1, 1, 10, 15, tzinfo=dt.UTC)
"""A phone whose battery was pulled wakes up on 2000-01-01."""

CUT_SHEATH = {"sheath": {"value": "fail"}}


@pytest.fixture
def night_shift(job, simple_checklists, operator):
    """Yesterday's job, cleared and working on its day and still working past midnight."""
    shift = JobFactory(
        site=job.site, supervisor=job.supervisor, date=timezone.localdate() - dt.timedelta(days=1)
    )
    make_drop(shift)
    with clock.replaying(shift.date):
        fill_all(shift, simple_checklists, operator)
        start_job(job=shift, by=operator)
    shift.refresh_from_db()
    return shift


def _late_failure(job, versions, operator, **clock_fields):
    """The safety line's failure, received today (after its job's day): kept, holding the job."""
    sheet, created = record_sheet(
        job=job,
        version=versions["safety_line"],
        by=operator,
        entries=CUT_SHEATH,
        equipment=job.drops.get().safety_line,
        **clock_fields,
    )
    assert created and sheet.verdict == "fail"
    return sheet


@pytest.mark.parametrize(
    "clock_fields",
    [
        pytest.param({"device_time": RESET, "phone_clock_offset_s": 0}, id="clock-reset"),
        pytest.param({}, id="no-phone-time"),
    ],
)
def test_a_photo_of_a_failure_kept_after_its_jobs_day_is_kept_too(
    night_shift, simple_checklists, operator, clock_fields
):
    """The failure was kept (stop work first), counted as made when received, and held the
    job; the photo of the cut sheath sent right after it was refused as 'made on 2000-01-01'
    (or on the day it was received), and the evidence of the failure was lost."""
    sheet = _late_failure(night_shift, simple_checklists, operator, **clock_fields)

    response = _post(operator, night_shift, sheet_uuid=str(sheet.client_uuid), item_key="sheath")

    assert response.status_code == 201, response.json()
    photo = Photo.objects.get()
    assert (photo.job_id, photo.sheet_uuid, photo.item_key) == (
        night_shift.pk,
        sheet.client_uuid,
        "sheath",
    )


def test_a_photo_of_a_late_failure_is_still_refused_once_its_day_is_signed(
    night_shift, simple_checklists, operator, supervisor, tmp_path
):
    """The seal is the rule that stays: a later row would read as tampering with the signed
    record; a correction to a signed day is a signed addendum."""
    sheet = _late_failure(
        night_shift, simple_checklists, operator, device_time=RESET, phone_clock_offset_s=0
    )
    create_self_signed(organisation=night_shift.organisation)
    close_job(job=night_shift, by=night_shift.supervisor, reason="Sheath cut; line withdrawn.")
    signed = sign_daily_record(
        job=night_shift, by=night_shift.supervisor, password=PASSWORD, meaning="reviewed_stopped"
    )

    response = _post(operator, night_shift, sheet_uuid=str(sheet.client_uuid), item_key="sheath")

    assert response.status_code == 400
    assert response.json() == {
        "job": ["This day's record is signed: a photo can no longer be added to it."]
    }
    assert _nothing_stored(tmp_path)
    assert verify_against_database(signed) == []


def test_a_loose_photo_sent_after_a_late_failure_is_still_refused(
    night_shift, simple_checklists, operator, tmp_path
):
    """A photo for no sheet carries no day but the one it is received on."""
    _late_failure(night_shift, simple_checklists, operator)

    response = _post(operator, night_shift)

    assert response.status_code == 400
    assert response.json() == {
        "job": [
            f"This job is for {night_shift.date.isoformat()}: its photos are taken on its day,"
            f" and this one was made on {timezone.localdate().isoformat()}."
        ]
    }
    assert _nothing_stored(tmp_path)
