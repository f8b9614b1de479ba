"""A certificate's file kept as evidence with its certification: checked by its bytes (a PDF, PNG
or JPEG, whatever its name or the browser says), stored once through Django's storage API (here
a storage with no local path, as object storage is), read back through the API by those who may
see the anchor, and never stored half: a refused certification leaves no file behind."""

import datetime as dt
import hashlib
import io

import pytest
from django.core.files.storage import default_storage
from django.core.files.uploadedfile import SimpleUploadedFile
from django.urls import reverse
from PIL import Image

from compliance.models import AnchorCertification, SiteGrant
from compliance.registers.documents import REFUSED
from tests.conftest import client_for
from tests.factories import AnchorFactory, OrganisationFactory, SiteFactory, UserFactory
from tests.records.object_storage import use_object_storage

pytestmark = pytest.mark.django_db

PDF = b"%PDF-1.7\n1 0 obj <<>> endobj\ntrailer <<>>\n%%EOF\n"


def png_bytes(size=(40, 30)) -> bytes:
    out = io.BytesIO()
    Image.new("RGB", size, (200, 30, 30)).save(out, format="PNG")
    return out.getvalue()


@pytest.fixture
def tower(settings):
    use_object_storage(settings)
    owner = OrganisationFactory(name="Quayside owners", kind="owner")
    manager = UserFactory(organisation=owner, role="property_manager")
    site = SiteFactory(organisation=owner)
    anchor = AnchorFactory(site=site, label="Q1")
    crew = OrganisationFactory(name="Rope crew")
    today = dt.date.today()
    SiteGrant.objects.create(
        site=site,
        contractor=crew,
        granted_by=manager,
        starts_on=today - dt.timedelta(days=1),
        ends_on=today + dt.timedelta(days=30),
    )
    return {
        "manager": manager,
        "anchor": anchor,
        "crew_supervisor": UserFactory(organisation=crew, role="supervisor"),
        "stranger": UserFactory(organisation=OrganisationFactory(name="Elsewhere"), role="admin"),
    }


def post(user, anchor, upload=None, **overrides):
    fields = {
        "certifier": "M. Adeyemi",
        "rated_capacity_kn": "15",
        "certified_on": "2026-11-20",
        "valid_until": "2027-11-20",
        **overrides,
    }
    if upload is not None:
        fields["document"] = upload
    return client_for(user).post(
        reverse("anchor-certifications", args=[anchor.pk]), fields, format="multipart"
    )


def stored_files() -> list[str]:
    return sorted(default_storage.files)


def test_a_pdf_is_kept_with_its_digest_and_read_back_unchanged(tower):
    upload = SimpleUploadedFile("cert.pdf", PDF, content_type="application/pdf")
    answer = post(tower["manager"], tower["anchor"], upload)
    assert answer.status_code == 201, answer.json()
    body = answer.json()
    cert = AnchorCertification.objects.get(pk=body["id"])
    assert body["document_sha256"] == cert.document_sha256 == hashlib.sha256(PDF).hexdigest()
    assert body["document_url"] == reverse(
        "anchor-certificate-file", args=[tower["anchor"].pk, cert.pk]
    )
    assert stored_files() == [f"certificates/{cert.document_sha256}.pdf"]
    # Read back by the owner and by a contractor working there under a grant.
    for reader in (tower["manager"], tower["crew_supervisor"]):
        got = client_for(reader).get(body["document_url"])
        assert got.status_code == 200
        assert b"".join(got.streaming_content) == PDF
        assert got["Content-Type"] == "application/pdf"
        assert got["X-Content-Type-Options"] == "nosniff"
        assert got["Content-Disposition"].startswith("attachment;")


def test_a_png_is_kept_as_a_png(tower):
    data = png_bytes()
    answer = post(tower["manager"], tower["anchor"], SimpleUploadedFile("photo.pdf", data))
    assert answer.status_code == 201, answer.json()
    assert stored_files() == [f"certificates/{hashlib.sha256(data).hexdigest()}.png"]
    got = client_for(tower["manager"]).get(answer.json()["document_url"])
    assert got["Content-Type"] == "image/png"


def mpo_bytes() -> bytes:
    """A JPEG holding more than one picture (the Multi-Picture format some phone cameras write):
    its first picture is a plain JPEG."""
    out = io.BytesIO()
    first, second = (Image.new("RGB", (40, 30), c) for c in ((200, 30, 30), (30, 30, 200)))
    first.save(out, format="MPO", save_all=True, append_images=[second])
    return out.getvalue()


def test_a_multi_picture_jpeg_is_kept_as_a_jpeg(tower):
    """A phone camera's photo of the certificate was refused as not an image."""
    data = mpo_bytes()
    answer = post(tower["manager"], tower["anchor"], SimpleUploadedFile("cert.jpg", data))
    assert answer.status_code == 201, answer.json()
    assert stored_files() == [f"certificates/{hashlib.sha256(data).hexdigest()}.jpg"]
    got = client_for(tower["manager"]).get(answer.json()["document_url"])
    assert got["Content-Type"] == "image/jpeg"


@pytest.mark.parametrize(
    "name,data",
    [
        ("cert.pdf", b"<html><script>alert(1)</script></html>"),  # a page named as a PDF
        ("cert.pdf", b"%PDF-1.7\nno end marker"),
        ("cert.png", png_bytes()[:60]),  # cut short
        ("cert.pdf", b"%PDF-1.7\n" + b"0" * (10 * 1024 * 1024) + b"%%EOF"),  # over 10 MB
    ],
    ids=["html", "pdf-without-end", "truncated-png", "too-large"],
)
def test_a_file_that_is_not_a_certificate_is_refused_and_nothing_is_kept(tower, name, data):
    answer = post(tower["manager"], tower["anchor"], SimpleUploadedFile(name, data))
    assert answer.status_code == 400
    assert answer.json() == {"document": [REFUSED]}
    assert AnchorCertification.objects.count() == 0
    assert stored_files() == []


def test_a_refused_certification_stores_no_file(tower):
    upload = SimpleUploadedFile("cert.pdf", PDF)
    answer = post(tower["manager"], tower["anchor"], upload, valid_until="2026-01-01")
    assert answer.status_code == 400
    assert answer.json() == {"valid_until": ["Must be after the certification date."]}
    assert AnchorCertification.objects.count() == 0
    assert stored_files() == []


def test_without_a_file_the_certification_has_no_file_url(tower):
    answer = post(tower["manager"], tower["anchor"])
    assert answer.status_code == 201
    assert answer.json()["document_url"] is None
    assert answer.json()["document_sha256"] == ""
    cert = AnchorCertification.objects.get()
    url = reverse("anchor-certificate-file", args=[tower["anchor"].pk, cert.pk])
    assert client_for(tower["manager"]).get(url).status_code == 404


def test_only_those_who_see_the_anchor_read_its_file_and_a_contractor_cannot_add_one(tower):
    answer = post(tower["manager"], tower["anchor"], SimpleUploadedFile("c.pdf", PDF))
    url = answer.json()["document_url"]
    assert client_for(tower["stranger"]).get(url).status_code == 404
    refused = post(tower["crew_supervisor"], tower["anchor"], SimpleUploadedFile("c.pdf", PDF))
    assert refused.status_code == 403
    assert AnchorCertification.objects.count() == 1
    assert len(stored_files()) == 1


def test_a_row_that_fails_to_save_takes_its_stored_file_with_it(tower):
    """The file is stored just before the row; if the row's save fails (a lost connection, a
    constraint), the file is deleted, not left behind without its certification."""
    from unittest import mock

    from django.db import OperationalError

    from compliance.registers.services import record_certification

    with (
        mock.patch.object(AnchorCertification, "save", side_effect=OperationalError("gone")),
        pytest.raises(OperationalError),
    ):
        record_certification(
            anchor=tower["anchor"],
            by=tower["manager"],
            document=io.BytesIO(PDF),
            certifier="M. Adeyemi",
            rated_capacity_kn=15.0,
            certified_on=dt.date(2026, 11, 20),
            valid_until=dt.date(2027, 11, 20),
        )
    assert stored_files() == []
    assert AnchorCertification.objects.count() == 0
