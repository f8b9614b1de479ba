from typing import Any

from django.contrib import admin
from django.http import HttpRequest

from checklists import models
from compliance.admin import AppendOnlyAdmin


@admin.register(models.Checklist)
class ChecklistAdmin(admin.ModelAdmin):
    list_display = ("key", "title", "applies_to", "organisation")


@admin.register(models.ChecklistVersion)
class ChecklistVersionAdmin(admin.ModelAdmin):
    list_display = ("checklist", "number", "status", "content_hash", "published_at")
    list_filter = ("status",)

    def has_change_permission(self, request: HttpRequest, obj: Any = None) -> bool:
        return obj is None or obj.status == models.ChecklistVersion.Status.DRAFT

    def has_delete_permission(self, request: HttpRequest, obj: Any = None) -> bool:
        return obj is None or obj.status == models.ChecklistVersion.Status.DRAFT


for model in (models.CheckSheet, models.ItemEntry, models.Photo):
    admin.site.register(model, AppendOnlyAdmin)
