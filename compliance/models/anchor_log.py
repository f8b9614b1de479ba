"""The building's anchor log book: signed entries chained per site."""

from django.db import models

from compliance.append_only import AppendOnlyModel
from compliance.models.people import Organisation, User
from compliance.models.records import SigningCredential
from compliance.models.registers import Anchor, Site


class AnchorLogEntry(AppendOnlyModel):
    """One entry of the building's anchor log book: signed by who made it, chained per site."""

    class Kind(models.TextChoices):
        PERIODIC_INSPECTION = "periodic_inspection", "Periodic inspection"
        LOAD_TEST = "load_test", "Load test"
        REPAIR = "repair", "Repair"
        MODIFICATION = "modification", "Modification"
        INSTALLATION = "installation", "Installation"
        REMOVED = "removed_from_service", "Removed from service"
        RETURNED = "returned_to_service", "Returned to service"
        PRE_USE = "pre_use_check", "Pre-use check (from a contractor's sheet)"

    class Result(models.TextChoices):
        PASS = "pass", "Pass"
        FAIL = "fail", "Fail"
        NONE = "none", "No result"

    site = models.ForeignKey(Site, on_delete=models.PROTECT, related_name="anchor_log")
    anchor = models.ForeignKey(Anchor, on_delete=models.PROTECT, related_name="log")
    kind = models.CharField(max_length=30, choices=Kind.choices)
    result = models.CharField(max_length=10, choices=Result.choices, default=Result.NONE)
    performed_on = models.DateField()
    performed_by = models.CharField(max_length=200, help_text="Printed name of who did the work.")
    performed_by_company = models.CharField(max_length=200, blank=True)
    details = models.TextField()
    sheet = models.ForeignKey(
        "checklists.CheckSheet", null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="+")
    recorded_by = models.ForeignKey(User, on_delete=models.PROTECT, related_name="+")
    sequence = models.PositiveIntegerField()
    previous_seal = models.CharField(max_length=64, blank=True)
    canonical_json = models.TextField()
    seal = models.CharField(max_length=64, unique=True)
    seal_signature = models.TextField(blank=True)
    credential = models.ForeignKey(
        SigningCredential, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    meaning = models.CharField(max_length=200)
    signed_at = models.DateTimeField()

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["site", "sequence"], name="log_sequence_unique"),
        ]
        ordering = ["site_id", "sequence"]
