"""Due-date notices, the e-mails that carried them and personal calendar feeds."""

from django.db import models
from django.db.models import Q

from compliance.append_only import AppendOnlyModel
from compliance.models.people import Organisation, User


class Notice(AppendOnlyModel):
    """Something the background checks found for a supervisor to act on."""

    class Kind(models.TextChoices):
        UNSIGNED = "unsigned_record", "Daily record not signed"
        CERT_DUE = "certification_due", "Anchor certification falls due"
        INSPECTION_DUE = "inspection_due", "Equipment inspection falls due"

    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="+")
    kind = models.CharField(max_length=20, choices=Kind.choices)
    subject = models.CharField(max_length=100, help_text="e.g. job:12, anchor:3")
    day = models.DateField(help_text="The day the check ran.")
    message = models.TextField()
    due_on = models.DateField(null=True, blank=True)
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["kind", "subject", "day"], name="notice_once_a_day"),
        ]


class NoticeEmail(AppendOnlyModel):
    """That a notice went out by e-mail, and to whom: one row per notice, so it is sent once.

    A row of its own because notices are append-only; the one-to-one key is the database's
    guarantee that two runs of the sending task never both send the same notice.
    """

    notice = models.OneToOneField(Notice, on_delete=models.PROTECT, related_name="email")
    sent_at = models.DateTimeField()
    recipients = models.JSONField(default=list, help_text="The addresses it went to.")

    def __str__(self) -> str:
        return f"notice {self.notice_id} e-mailed {self.sent_at:%Y-%m-%d %H:%M}"


class CalendarFeed(models.Model):
    """A person's secret calendar address of due dates; only the token's SHA-256 is kept."""

    user = models.ForeignKey(User, on_delete=models.CASCADE, related_name="calendar_feeds")
    token_sha256 = models.CharField(max_length=64, unique=True)
    created_at = models.DateTimeField(auto_now_add=True)
    revoked_at = models.DateTimeField(null=True, blank=True)

    class Meta:
        constraints = [
            models.UniqueConstraint(
                fields=["user"],
                condition=Q(revoked_at__isnull=True),
                name="one_live_calendar_feed",
            ),
        ]

    def __str__(self) -> str:
        state = "revoked" if self.revoked_at else "live"
        return f"calendar feed of {self.user_id} ({state})"
