"""A profile's new values are a new revision, never an edit of the old one, with a diff."""

import io
import json
import shutil

import pytest
from django.conf import settings
from django.core.management import call_command
from django.urls import reverse

from compliance.append_only import AppendOnlyViolation
from compliance.models import ProfileRevision
from compliance.registers.profiles import load_profiles
from tests.conftest import client_for

pytestmark = pytest.mark.django_db


@pytest.fixture
def profiles_dir(tmp_path):
    target = tmp_path / "profiles"
    shutil.copytree(settings.PARAPET_FIXTURES_DIR / "profiles", target)
    return target


def _change_gust_limit(directory, value):
    path = directory / "generic.json"
    data = json.loads(path.read_text())
    data["thresholds"]["max_gust_ms"]["value"] = value
    data["thresholds"]["max_gust_ms"]["source"] = "The maker's manual for the demo robot."
    path.write_text(json.dumps(data))


def test_reloading_the_same_profile_adds_no_revision(profiles_dir):
    load_profiles(profiles_dir)
    count = ProfileRevision.objects.count()
    load_profiles(profiles_dir)
    assert ProfileRevision.objects.count() == count


def test_new_values_publish_a_new_revision_and_keep_the_old_one(profiles_dir):
    """Before, loading new values edited the profile in place and the old values were lost."""
    load_profiles(profiles_dir)
    first = ProfileRevision.objects.get(profile__key="generic")
    _change_gust_limit(profiles_dir, 12.0)
    load_profiles(profiles_dir)
    revisions = list(ProfileRevision.objects.filter(profile__key="generic"))
    assert [r.number for r in revisions] == [1, 2]
    assert revisions[0].thresholds == first.thresholds
    assert revisions[0].thresholds["max_gust_ms"]["value"] == 14.0
    assert revisions[1].thresholds["max_gust_ms"]["value"] == 12.0
    with pytest.raises(AppendOnlyViolation):
        revisions[0].save()

    out = io.StringIO()
    call_command("profile_diff", "generic", stdout=out)
    diff = json.loads(out.getvalue())
    assert (diff["from"], diff["to"]) == (1, 2)
    assert diff["changed"] == [
        {
            "key": "max_gust_ms",
            "fields": ["source", "value"],
            "before": {"source": first.thresholds["max_gust_ms"]["source"], "value": 14.0},
            "after": {"source": "The maker's manual for the demo robot.", "value": 12.0},
        }
    ]
    assert diff["added"] == {} and diff["removed"] == {}


def test_the_api_lists_revisions_with_their_changes(profiles_dir, job, supervisor):
    load_profiles(profiles_dir)
    _change_gust_limit(profiles_dir, 12.0)
    load_profiles(profiles_dir)
    response = client_for(supervisor).get(reverse("profile-revisions", args=["generic"]))
    assert response.status_code == 200
    body = response.json()
    assert [r["number"] for r in body] == [1, 2]
    assert body[0]["changes"] is None
    assert [c["key"] for c in body[1]["changes"]["changed"]] == ["max_gust_ms"]
