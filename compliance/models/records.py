"""Signing credentials and the signed daily records, their chain heads and rendered PDFs."""

from django.db import models
from django.db.models import Q

from compliance.append_only import AppendOnlyModel
from compliance.models.jobs import Job
from compliance.models.people import Organisation, User
from compliance.models.registers import Site


class SigningCredential(models.Model):
    """An organisation's document-signing certificate and its key (encrypted at rest)."""

    organisation = models.ForeignKey(
        Organisation, on_delete=models.PROTECT, related_name="signing_credentials"
    )
    certificate_pem = models.TextField()
    encrypted_key_pem = models.TextField()
    fingerprint_sha256 = models.CharField(max_length=64, unique=True)
    subject = models.CharField(max_length=300)
    not_after = models.DateTimeField()
    self_signed = models.BooleanField(default=False)
    active = models.BooleanField(default=True)
    created_at = models.DateTimeField(auto_now_add=True)
    retired_at = models.DateTimeField(
        null=True,
        blank=True,
        help_text="When a newer key replaced this one; nothing signed after it is accepted.",
    )

    class Meta:
        ordering = ["-created_at", "-id"]

    def __str__(self) -> str:
        return self.subject


class DailyRecord(AppendOnlyModel):
    """The sealed, signed record of one job-day (or an addendum to one); never edited."""

    class Kind(models.TextChoices):
        RECORD = "record", "Daily record"
        ADDENDUM = "addendum", "Addendum"

    kind = models.CharField(max_length=10, choices=Kind.choices, default=Kind.RECORD)
    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="+")
    site = models.ForeignKey(Site, on_delete=models.PROTECT, related_name="daily_records")
    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="daily_records")
    amends = models.ForeignKey(
        "self", null=True, blank=True, on_delete=models.PROTECT, related_name="addenda"
    )
    sequence = models.PositiveIntegerField(
        help_text="Position in the organisation's chain at this site, from 1."
    )
    previous_seal = models.CharField(max_length=64, blank=True)
    canonical_json = models.TextField(help_text="RFC 8785 canonical JSON, exactly as sealed.")
    seal = models.CharField(max_length=64, unique=True, help_text="SHA-256 of canonical_json.")
    seal_signature = models.TextField(help_text="Base64 signature of the seal by the org key.")
    credential = models.ForeignKey(SigningCredential, on_delete=models.PROTECT, related_name="+")
    signer = models.ForeignKey(User, on_delete=models.PROTECT, related_name="+")
    signer_name = models.CharField(max_length=200)
    signer_role = models.CharField(max_length=40)
    meaning = models.CharField(max_length=200)
    signed_at = models.DateTimeField()
    client_uuid = models.UUIDField(
        null=True,
        blank=True,
        help_text="The id the phone or page gave the request, so a resent request adds nothing.",
    )

    class Meta:
        constraints = [
            models.UniqueConstraint(
                fields=["organisation", "site", "sequence"], name="record_sequence_unique"
            ),
            models.UniqueConstraint(
                fields=["organisation", "client_uuid"], name="record_client_uuid_unique"
            ),
            models.UniqueConstraint(
                fields=["job"], condition=Q(kind="record"), name="one_record_per_job"
            ),
            models.CheckConstraint(
                condition=Q(kind="record", amends=None) | Q(kind="addendum", amends__isnull=False),
                name="addendum_amends_a_record",
            ),
        ]
        ordering = ["site_id", "organisation_id", "sequence"]


class RecordChainHead(models.Model):
    """The signed head of one organisation's chain of daily records at one site.

    Re-signed at every append (and when the organisation's key is replaced), so deleting the
    last records of a chain, or rolling its head back, shows: the head names a sequence and a
    seal the chain no longer ends with, and only the organisation's current key can sign a new
    head. Its row is also the lock that serialises appends to the chain.
    """

    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="+")
    site = models.ForeignKey(Site, on_delete=models.PROTECT, related_name="+")
    sequence = models.PositiveIntegerField(default=0)
    seal = models.CharField(max_length=64, blank=True)
    statement = models.TextField(blank=True, help_text="RFC 8785 JSON of what was signed.")
    signature = models.TextField(blank=True)
    credential = models.ForeignKey(
        SigningCredential, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["organisation", "site"], name="one_head_per_chain"),
        ]

    def __str__(self) -> str:
        return f"chain of organisation {self.organisation_id} at site {self.site_id}"


class RecordPdf(AppendOnlyModel):
    """The rendered, signed PDF of a daily record."""

    record = models.OneToOneField(DailyRecord, on_delete=models.PROTECT, related_name="pdf")
    file = models.FileField(upload_to="records/%Y/%m/")
    sha256 = models.CharField(max_length=64)
    size_bytes = models.PositiveIntegerField()
    created_at = models.DateTimeField(auto_now_add=True)


class PageCheck(models.Model):
    """A page check that passed: the PDF whose bytes hash to ``pdf_sha256`` shows exactly what
    the record sealed as ``seal`` draws to (compliance/records/page_check.py).

    The check draws the whole record again (seconds for a long day); its answer for the same
    bytes, seal and method never changes, so a passed check is kept and the same file is not
    drawn again on every verification. ``mac`` is an HMAC of the row under a key derived from
    the server's secret key: a row written into the database by someone without that key (an
    insider with database access, a restored dump from elsewhere) fails it and is ignored, and
    the file is drawn and compared again. Only passes are kept; a failure is always recomputed.
    """

    pdf_sha256 = models.CharField(max_length=64)
    seal = models.CharField(max_length=64)
    method = models.CharField(max_length=40)
    checked_at = models.DateTimeField(auto_now_add=True)
    mac = models.CharField(max_length=64)

    class Meta:
        constraints = [
            models.UniqueConstraint(
                fields=["pdf_sha256", "seal", "method"], name="one_page_check_per_file"
            ),
        ]

    def __str__(self) -> str:
        return f"pages of {self.pdf_sha256[:12]} match record {self.seal[:12]}"


class ExportMade(AppendOnlyModel):
    """An export this server made: the SHA-256 of its signed manifest, when, by whom.

    Verifying an export on the server compares it with the stored records; a record of the
    period signed after the export was made is not one it left out. Only the server's own word
    says when that was (an export's own claims are its signer's), so the moment is taken from
    here, and only for a row whose HMAC (under a key derived from the server's secret key)
    holds: an export this server did not make is held to every record stored now.
    """

    manifest_sha256 = models.CharField(max_length=64, unique=True)
    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="+")
    site = models.ForeignKey(Site, on_delete=models.PROTECT, related_name="+")
    made_by = models.ForeignKey(User, on_delete=models.PROTECT, related_name="+")
    made_at = models.DateTimeField()
    mac = models.CharField(max_length=64)
