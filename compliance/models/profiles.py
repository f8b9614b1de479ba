"""Jurisdiction profiles: the limits and defaults a site's checks are held to, revised
append-only."""

from django.db import models

from compliance.append_only import AppendOnlyModel


class JurisdictionProfile(models.Model):
    """Thresholds and cautions of one jurisdiction, loaded from fixtures/profiles."""

    key = models.SlugField(max_length=50, unique=True)
    name = models.CharField(max_length=200)
    thresholds = models.JSONField(help_text="{key: {value, unit, source}}")
    cautions = models.TextField()
    content_hash = models.CharField(max_length=64)

    def __str__(self) -> str:
        return self.name

    def threshold(self, key: str) -> float:
        return float(self.thresholds[key]["value"])


class ProfileRevision(AppendOnlyModel):
    """One published content of a profile, kept for ever: loading new values adds a revision
    and never edits an old one (the profile row points at the newest content)."""

    profile = models.ForeignKey(
        JurisdictionProfile, on_delete=models.PROTECT, related_name="revisions"
    )
    number = models.PositiveIntegerField()
    name = models.CharField(max_length=200)
    thresholds = models.JSONField()
    cautions = models.TextField()
    content_hash = models.CharField(max_length=64)
    published_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["profile_id", "number"]
        constraints = [
            models.UniqueConstraint(fields=["profile", "number"], name="profile_revision_number"),
            models.UniqueConstraint(
                fields=["profile", "content_hash"], name="profile_revision_content"
            ),
        ]

    def __str__(self) -> str:
        return f"{self.profile.key} revision {self.number}"
