"""Serves the phone app built by Vite into compliance/static/app/ (see frontend/)."""

from pathlib import Path
from typing import Any

from django.conf import settings
from django.contrib.auth.decorators import login_required
from django.contrib.auth.views import LoginView
from django.http import FileResponse, Http404, HttpRequest, HttpResponse
from django.shortcuts import render
from django.views.decorators.csrf import ensure_csrf_cookie
from django.views.decorators.http import require_GET, require_http_methods

from compliance.api.records import MAX_UPLOAD
from compliance.api.throttles import login_allowed
from compliance.records.checks import verify_export, verify_pdf

APP_DIR = Path(settings.BASE_DIR) / "compliance" / "static" / "app"


def _file(name: str, content_type: str) -> FileResponse:
    path = APP_DIR / name
    if not path.is_file():
        raise Http404("The phone app is not built; run `make setup`.")
    response = FileResponse(path.open("rb"), content_type=content_type)
    response["Cache-Control"] = "no-cache"
    return response


@require_GET
@ensure_csrf_cookie
def app_shell(request: HttpRequest) -> HttpResponse:
    """The single page of the phone app; sets the CSRF cookie the app sends back."""
    return _file("index.html", "text/html; charset=utf-8")


@require_GET
def service_worker(request: HttpRequest) -> HttpResponse:
    response = _file("sw.js", "application/javascript")
    response["Service-Worker-Allowed"] = "/"
    return response


@require_GET
def manifest(request: HttpRequest) -> HttpResponse:
    return _file("manifest.webmanifest", "application/manifest+json")


@login_required
@require_http_methods(["GET", "POST"])
def verify_page(request: HttpRequest) -> HttpResponse:
    """A page where an auditor uploads a record PDF or an export and reads the verdict."""
    context: dict[str, object] = {}
    if request.method == "POST":
        upload = request.FILES.get("file")
        if upload is None:
            context["errors"] = "Choose a file to check."
        elif upload.size is None or upload.size > MAX_UPLOAD:
            context["errors"] = "The file is larger than 50 MB."
        else:
            data = upload.read()
            report = (
                verify_export(data, use_database=True)
                if data[:2] == b"PK"
                else verify_pdf(data, name=upload.name or "")
            )
            context["report"] = report.as_dict()
    return render(request, "parapet/verify.html", context)


class ThrottledLoginView(LoginView):
    """The HTML sign-in page, under the same limits as the API's sign-in."""

    template_name = "parapet/login.html"

    def post(self, request: HttpRequest, *args: Any, **kwargs: Any) -> HttpResponse:
        if not login_allowed(request):
            context = self.get_context_data(form=self.get_form(), throttled=True)
            return self.render_to_response(context, status=429)
        return super().post(request, *args, **kwargs)
