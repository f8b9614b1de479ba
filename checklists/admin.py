from django.contrib import admin

from checklists import models
from compliance.admin import AppendOnlyAdmin, ShownOnlyAdmin


@admin.register(models.Checklist)
class ChecklistAdmin(ShownOnlyAdmin):
    list_display = ("key", "title", "applies_to", "organisation")


@admin.register(models.ChecklistVersion)
class ChecklistVersionAdmin(ShownOnlyAdmin):
    """Drafts are written and published through the API (and the publish_checklist command),
    which validate the items; a published version never changes."""

    list_display = ("checklist", "number", "status", "content_hash", "published_at")
    list_filter = ("status",)


for model in (models.CheckSheet, models.ItemEntry, models.Photo):
    admin.site.register(model, AppendOnlyAdmin)
