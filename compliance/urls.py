from django.contrib import admin
from django.urls import include, path
from drf_spectacular.views import SpectacularAPIView

from compliance import app_views
from compliance.api.due import calendar_feed

urlpatterns = [
    path("admin/", admin.site.urls),
    path("api/v1/", include("compliance.api.urls")),
    path("api/schema/", SpectacularAPIView.as_view(), name="schema"),
    path("calendar/<str:token>.ics", calendar_feed, name="calendar-feed"),
    path("verify/", app_views.verify_page, name="verify-page"),
    path(
        "login/",
        app_views.ThrottledLoginView.as_view(),
        name="login-page",
    ),
    path("sw.js", app_views.service_worker, name="service-worker"),
    path("manifest.webmanifest", app_views.manifest, name="manifest"),
    path("", app_views.app_shell, name="app"),
]
