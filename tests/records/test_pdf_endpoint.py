"""The record's PDF over HTTP: 202 while it renders, never rendered in the request, and a
sign-off that answers with the sealed record whatever happens to the render."""

import logging
from unittest import mock

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile
from django.urls import reverse

from compliance.models import DailyRecord, PageCheck, RecordPdf
from compliance.tasks import (
    RENDER_MAX_RETRIES,
    render_backoff_s,
    render_daily_record,
    render_missing_pdfs,
)
from tests.conftest import client_for
from tests.factories import PASSWORD

pytestmark = pytest.mark.django_db


class Broken(Exception):
    pass


@pytest.fixture
def logged():
    """Records of the task's logger (pytest's own log capture is off in the quick command)."""
    records: list[logging.LogRecord] = []
    handler = logging.Handler(level=logging.DEBUG)
    handler.emit = records.append  # type: ignore[method-assign]
    logger = logging.getLogger("compliance.tasks")
    logger.addHandler(handler)
    yield records
    logger.removeHandler(handler)


def test_a_pdf_not_yet_rendered_is_queued_and_answers_202(signed, supervisor, settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path
    client = client_for(supervisor)
    url = reverse("record-pdf", args=[signed.pk])
    with mock.patch.object(render_daily_record, "delay") as delay:
        first = client.get(url)
        again = client.get(url)
    assert first.status_code == 202
    assert first["Retry-After"] == "5"
    assert first.json()["status"] == "rendering"
    assert again.status_code == 202
    delay.assert_called_once_with(signed.pk)  # polling does not queue a render per request
    assert not RecordPdf.objects.exists()  # nothing was rendered in the request
    assert client.get(reverse("record-detail", args=[signed.pk])).json()["pdf_ready"] is False


def test_a_rendered_pdf_answers_200(signed, supervisor, settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path
    render_daily_record.apply(args=[signed.pk])
    response = client_for(supervisor).get(reverse("record-pdf", args=[signed.pk]))
    assert response.status_code == 200
    assert response["Content-Type"] == "application/pdf"
    assert b"".join(response.streaming_content) == RecordPdf.objects.get().file.read()


@pytest.mark.django_db(transaction=True)
def test_sign_off_answers_201_with_the_sealed_record_when_the_render_fails(
    closed_job, supervisor, settings, tmp_path, logged
):
    """In-process tasks (no broker) run the render on commit, inside the request: a render
    that fails is logged and retried, and the signer still gets the sealed record."""
    settings.MEDIA_ROOT = tmp_path
    client = client_for(supervisor)
    with mock.patch("compliance.records.files.render_signed_pdf", side_effect=Broken("x")) as r:
        response = client.post(
            reverse("job-sign", args=[closed_job.pk]),
            {"password": PASSWORD, "meaning": "reviewed_safe"},
            format="json",
        )
    assert response.status_code == 201, response.content[:300]
    record = DailyRecord.objects.get()
    assert response.json()["seal"] == record.seal
    assert response.json()["pdf_ready"] is False
    assert r.call_count == 2  # the render and its one in-process retry
    assert any("failed" in m.getMessage() for m in logged if m.levelno >= logging.ERROR)
    url = reverse("record-pdf", args=[record.pk])
    assert client.get(url).status_code == 202  # queued again (and, in-process, rendered)
    response = client.get(url)
    assert response.status_code == 200
    assert RecordPdf.objects.filter(record=record).count() == 1


@pytest.mark.django_db(transaction=True)
def test_sign_off_answers_201_when_the_render_cannot_be_queued(closed_job, supervisor):
    with mock.patch.object(render_daily_record, "delay", side_effect=ConnectionError("broker")):
        response = client_for(supervisor).post(
            reverse("job-sign", args=[closed_job.pk]),
            {"password": PASSWORD, "meaning": "reviewed_safe"},
            format="json",
        )
    assert response.status_code == 201, response.content[:300]
    assert response.json()["seal"] == DailyRecord.objects.get().seal


def test_a_failed_render_on_a_worker_is_retried_with_backoff_then_given_up(
    signed, logged, monkeypatch
):
    """Backoff: 15 s doubling, at most 30 min apart; after RENDER_MAX_RETRIES it fails."""
    monkeypatch.setattr("compliance.tasks.ensure_pdf", mock.Mock(side_effect=Broken()))
    asked: list[int] = []

    def retry(exc=None, countdown=None, **kwargs):
        asked.append(countdown)
        return RuntimeError("retry")

    monkeypatch.setattr(render_daily_record, "retry", retry)
    for retries in range(RENDER_MAX_RETRIES + 1):
        render_daily_record.push_request(retries=retries, is_eager=False)
        try:
            with pytest.raises((RuntimeError, Broken)) as raised:
                render_daily_record.run(signed.pk)
        finally:
            render_daily_record.pop_request()
    assert raised.type is Broken  # the last try gives up with the render's own error
    assert asked == [render_backoff_s(n) for n in range(RENDER_MAX_RETRIES)]
    assert asked[:4] == [15, 30, 60, 120] and max(asked) == 1800
    warnings = [m for m in logged if m.levelno == logging.WARNING]
    assert len(warnings) == RENDER_MAX_RETRIES
    assert any(m.levelno == logging.ERROR for m in logged)


def test_records_left_without_a_pdf_are_queued_again(signed, settings, tmp_path):
    import datetime as dt

    settings.MEDIA_ROOT = tmp_path
    with mock.patch.object(render_daily_record, "delay") as delay:
        assert render_missing_pdfs(older_than_minutes=10) == 0  # just signed: still rendering
        later = signed.signed_at + dt.timedelta(minutes=11)
        with mock.patch("django.utils.timezone.now", return_value=later):
            assert render_missing_pdfs(older_than_minutes=10) == 1
    delay.assert_called_once_with(signed.pk)


def test_the_stored_record_is_checked_on_the_server_as_an_upload_of_it_would_be(
    signed, supervisor, settings, tmp_path, django_assert_num_queries
):
    """GET verify checks the stored PDF with the database: the same answer as uploading that
    PDF to POST /verify/, VERIFIED by the organisation's own registered certificate; 202 while
    the PDF is not rendered yet."""
    from compliance.records.files import ensure_pdf

    settings.MEDIA_ROOT = tmp_path
    client = client_for(supervisor)
    url = reverse("record-verify", args=[signed.pk])
    with mock.patch.object(render_daily_record, "delay"):
        assert client.get(url).status_code == 202
    ensure_pdf(signed)
    # The file the server drew and signed is kept as checked when it is stored: its pages are
    # what the renderer draws from the sealed document, by construction.
    assert PageCheck.objects.count() == 1
    # The record, its PDF, then the verifier's checks against the stored rows, the chain and
    # the organisation's certificates (pinned: a change that adds one fails here). A file
    # whose pass is kept is not drawn again.
    with (
        mock.patch("compliance.records.verifier.differing_pages") as redraw,
        django_assert_num_queries(24),
    ):
        answer = client.get(url)
    redraw.assert_not_called()
    assert answer.status_code == 200
    # Without the kept pass the pages are drawn again and the pass kept (a lookup, then a
    # savepoint and an insert); the answer is the same.
    PageCheck.objects.all().delete()
    with django_assert_num_queries(27):
        again = client.get(url)
    assert PageCheck.objects.count() == 1
    assert again.json() == answer.json()
    report = answer.json()
    assert report["ok"] is True and report["verdict"].startswith("VERIFIED: daily record ")
    assert report["signer"]["organisation"] == signed.organisation.name
    stored = RecordPdf.objects.get(record=signed).file.open("rb").read()
    uploaded = client.post(
        reverse("verify"), {"file": SimpleUploadedFile("r.pdf", stored)}, format="multipart"
    ).json()
    # The same answer, word for word: whether the pages were drawn now or the result was kept
    # is not told (it would tell whoever holds the file that someone checked it before).
    assert {k: v for k, v in uploaded.items() if k != "verdict"} == {
        k: v for k, v in report.items() if k != "verdict"
    }


RENDER_QUERIES = 9
"""Rendering and storing a record's PDF: is one stored, its signing credential and site (for the
signature; a record with photos reads them too, in one query), then the file's row in its
transaction (a savepoint inside a test's) and the kept page check (a savepoint, its insert, its
release)."""


def test_rendering_a_record_costs_its_pinned_queries(
    signed, settings, tmp_path, django_assert_num_queries
):
    from compliance.records.files import ensure_pdf

    settings.MEDIA_ROOT = tmp_path
    record = DailyRecord.objects.get(pk=signed.pk)
    with django_assert_num_queries(RENDER_QUERIES):
        stored = ensure_pdf(record)
    assert PageCheck.objects.filter(pdf_sha256=stored.sha256, seal=record.seal).count() == 1
    with django_assert_num_queries(1):  # rendered once: the stored one is returned
        assert ensure_pdf(record) == stored
