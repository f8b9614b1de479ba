from django.urls import include, path
from rest_framework.routers import DefaultRouter

from compliance.api import anchor_log, due, grants, records, views

router = DefaultRouter()
router.register("profiles", views.ProfileViewSet, basename="profile")
router.register("sites", views.SiteViewSet, basename="site")
router.register("anchors", views.AnchorViewSet, basename="anchor")
router.register("equipment", views.EquipmentViewSet, basename="equipment")
router.register("jobs", views.JobViewSet, basename="job")
router.register("checklists", views.ChecklistViewSet, basename="checklist")
router.register("checklist-versions", views.ChecklistVersionViewSet, basename="checklist-version")
router.register("sheets", views.SheetViewSet, basename="sheet")
router.register("records", records.RecordViewSet, basename="record")
router.register("anchor-log", anchor_log.AnchorLogViewSet, basename="anchor-log")

urlpatterns = [
    path("auth/login/", views.session_login, name="login"),
    path("auth/logout/", views.session_logout, name="logout"),
    path("auth/token/", views.token_login, name="token"),
    path("me/", views.me, name="me"),
    path("me/calendar/", due.my_calendar, name="my-calendar"),
    path("due/", due.due_list, name="due"),
    path("calc/<slug:name>/", views.calculate, name="calc"),
    path("sync/", views.sync, name="sync"),
    path("photos/", views.upload_photo, name="photos"),
    path("verify/", records.verify, name="verify"),
    path("sites/<int:pk>/grants/", grants.site_grants, name="site-grants"),
    path(
        "sites/<int:pk>/grants/<int:grant_pk>/end/",
        grants.end_site_grant,
        name="site-grant-end",
    ),
    path("", include(router.urls)),
]
