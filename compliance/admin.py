"""Admin for people and organisations; everything else is shown here but never written here.

Registers, jobs and safety records change only through their services (the API and the
desk screens call them), each in a transaction with its audit entry: a form here would skip
both. Append-only records are never changed or deleted anywhere.
"""

from typing import Any

from django.contrib import admin
from django.contrib.auth.admin import UserAdmin
from django.http import HttpRequest

from compliance import models


class ShownOnlyAdmin(admin.ModelAdmin):
    """View only: no add, no change, no delete."""

    def has_add_permission(self, request: HttpRequest, obj: Any = None) -> bool:
        return False

    def has_change_permission(self, request: HttpRequest, obj: Any = None) -> bool:
        return False

    def has_delete_permission(self, request: HttpRequest, obj: Any = None) -> bool:
        return False


class ShownOnlyInline(admin.TabularInline):
    extra = 0
    can_delete = False

    def has_add_permission(self, request: HttpRequest, obj: Any = None) -> bool:
        return False

    def has_change_permission(self, request: HttpRequest, obj: Any = None) -> bool:
        return False


AppendOnlyAdmin = ShownOnlyAdmin


@admin.register(models.User)
class PersonAdmin(UserAdmin):
    fieldsets = (*UserAdmin.fieldsets, ("Parapet", {"fields": ("organisation", "role")}))
    list_display = ("username", "first_name", "last_name", "organisation", "role")
    list_filter = ("organisation", "role")


@admin.register(models.Organisation)
class OrganisationAdmin(admin.ModelAdmin):
    list_display = ("name", "kind")


@admin.register(models.JurisdictionProfile)
class ProfileAdmin(AppendOnlyAdmin):
    list_display = ("key", "name", "content_hash")


class CertificationInline(ShownOnlyInline):
    model = models.AnchorCertification


@admin.register(models.Site)
class SiteAdmin(ShownOnlyAdmin):
    list_display = ("name", "organisation", "height_m", "profile")


@admin.register(models.Anchor)
class AnchorAdmin(ShownOnlyAdmin):
    list_display = ("label", "site", "x_m", "y_m")
    list_filter = ("site",)
    inlines = [CertificationInline]


@admin.register(models.Equipment)
class EquipmentAdmin(ShownOnlyAdmin):
    list_display = ("label", "kind", "organisation", "in_service", "next_inspection_due")
    list_filter = ("kind", "organisation")


class DropInline(ShownOnlyInline):
    model = models.Drop


@admin.register(models.Job)
class JobAdmin(ShownOnlyAdmin):
    list_display = ("site", "date", "state", "supervisor")
    list_filter = ("state", "site")
    readonly_fields = ("state",)
    inlines = [DropInline]


@admin.register(models.DailyRecord)
class DailyRecordAdmin(AppendOnlyAdmin):
    list_display = ("site", "sequence", "kind", "job", "signer_name", "signed_at", "seal")
    list_filter = ("site", "kind")


@admin.register(models.SigningCredential)
class SigningCredentialAdmin(AppendOnlyAdmin):
    list_display = ("organisation", "subject", "fingerprint_sha256", "not_after", "active")
    exclude = ("encrypted_key_pem",)


for model in (
    models.JobTransition,
    models.Hold,
    models.HoldClearance,
    models.DropLog,
    models.AnchorCertification,
    models.RecordPdf,
    models.Notice,
    models.SyncReceipt,
    models.RegisterChange,
    models.NoticeEmail,
    models.CalendarFeed,
    models.SiteGrant,
    models.SiteGrantEnd,
):
    admin.site.register(model, AppendOnlyAdmin)
