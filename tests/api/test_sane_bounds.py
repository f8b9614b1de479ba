"""Values no building, anchor or piece of kit can have are a 400 naming the field, and nothing of
them is stored. The bounds are sanity bounds against typing errors (common practice, no source),
not engineering limits."""

import datetime as dt

import pytest
from django.urls import reverse
from django.utils import timezone

from compliance.models import Anchor, AnchorCertification, Drop, Equipment, RegisterChange, Site
from tests.conftest import client_for
from tests.factories import SiteFactory, drop_body

pytestmark = pytest.mark.django_db

OUTLINE = [[0, 0], [30, 0], [30, 20], [0, 20]]


def stored():
    return (
        Site.objects.count(),
        Anchor.objects.count(),
        AnchorCertification.objects.count(),
        Equipment.objects.count(),
        Drop.objects.count(),
        RegisterChange.objects.count(),
    )


def add_drop(job, supervisor, **change):
    # The drop of the job fixture has its kit booked; a second drop on the same job shares it.
    return client_for(supervisor).post(
        reverse("job-drops", args=[job.pk]),
        drop_body(job.drops.get(), label="D2", **change),
        format="json",
    )


TALLER = "At most the site's height, 120 m: a drop cannot be longer than the building is tall."


@pytest.mark.parametrize(
    ("length", "says"),
    [
        (1e308, TALLER),
        (120.5, TALLER),
        (True, "A valid number is required."),
        (0, "Must be greater than zero."),
        (-5, "Must be greater than zero."),
    ],
    ids=["1e308", "just taller", "true", "zero", "negative"],
)
def test_a_drop_length_is_positive_and_at_most_the_site_height(job, supervisor, length, says):
    before = stored()
    response = add_drop(job, supervisor, length_m=length)
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"length_m": [says]}
    assert stored() == before


def test_a_drop_as_long_as_the_building_is_tall_is_planned(job, supervisor):
    response = add_drop(job, supervisor, length_m=120)
    assert response.status_code == 201, response.content[:300]
    assert response.json()["length_m"] == 120.0


def test_an_absurd_equipment_rating_is_refused_naming_it(job, supervisor):
    tether = job.drops.get().tether
    before = (stored(), dict(tether.ratings))
    response = client_for(supervisor).patch(
        reverse("equipment-detail", args=[tether.pk]),
        {"ratings": {**tether.ratings, "length_m": 1e308}},
        format="json",
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {
        "ratings.length_m": ["At most 2000 m: a larger value is taken for a typing error."]
    }
    tether.refresh_from_db()
    assert (stored(), tether.ratings) == before


def test_a_tether_s_working_load_limit_is_never_above_its_breaking_strength(job, supervisor):
    """A working load limit is the breaking strength divided by a safety factor above one
    (common practice, no source): a limit above the strength is a slip of the keyboard, and the
    suspended-load check would be worked against it."""
    tether = job.drops.get().tether
    before = (stored(), dict(tether.ratings))
    response = client_for(supervisor).patch(
        reverse("equipment-detail", args=[tether.pk]),
        {"ratings": {**tether.ratings, "mbs_kn": 10, "wll_kn": 50}},
        format="json",
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {
        "ratings.wll_kn": [
            "Above the minimum breaking strength (10 kN): a working load limit is a fraction of it."
        ]
    }
    tether.refresh_from_db()
    assert (stored(), tether.ratings) == before


def test_every_rating_has_a_sanity_maximum_the_stored_kit_keeps_under():
    from compliance.registers.ratings import EQUIPMENT_RATINGS
    from tests.factories import RATINGS

    for kind, ratings in EQUIPMENT_RATINGS.items():
        for rating in ratings:
            assert rating.text or rating.maximum is not None, (kind, rating.key)
            value = RATINGS[kind].get(rating.key)
            if rating.maximum is not None and value is not None:
                assert value <= rating.maximum, (kind, rating.key)


def test_a_manufacturing_date_after_today_is_refused(job, supervisor):
    client = client_for(supervisor)
    tether = job.drops.get().tether
    before = stored()
    response = client.patch(
        reverse("equipment-detail", args=[tether.pk]), {"made_on": "2030-01-01"}, format="json"
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"made_on": ["A manufacturing date cannot be after today."]}
    tomorrow = (timezone.localdate() + dt.timedelta(days=1)).isoformat()
    response = client.post(
        reverse("equipment-list"),
        {"kind": "estop", "label": "E-9", "ratings": {"location": "roof"}, "made_on": tomorrow},
        format="json",
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"made_on": ["A manufacturing date cannot be after today."]}
    tether.refresh_from_db()
    assert (stored(), tether.made_on) == (before, None)
    today = timezone.localdate().isoformat()
    response = client.patch(
        reverse("equipment-detail", args=[tether.pk]), {"made_on": today}, format="json"
    )
    assert response.status_code == 200, response.content[:300]


def certification(capacity):
    today = timezone.localdate()
    return {
        "certifier": "P",
        "rated_capacity_kn": capacity,
        "certified_on": (today - dt.timedelta(days=5)).isoformat(),
        "valid_until": (today + dt.timedelta(days=360)).isoformat(),
    }


@pytest.mark.parametrize(
    ("capacity", "says"),
    [
        (1e308, "At most 1000 kN: a larger value is taken for a typing error."),
        (True, "A valid number is required."),
    ],
)
def test_an_absurd_anchor_capacity_is_refused(job, supervisor, capacity, says):
    anchor = job.drops.get().anchor
    before = stored()
    response = client_for(supervisor).post(
        reverse("anchor-certifications", args=[anchor.pk]), certification(capacity), format="json"
    )
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {"rated_capacity_kn": [says]}
    assert stored() == before


def test_a_capacity_of_the_bound_is_recorded(job, supervisor):
    anchor = job.drops.get().anchor
    response = client_for(supervisor).post(
        reverse("anchor-certifications", args=[anchor.pk]), certification(1000), format="json"
    )
    assert response.status_code == 201, response.content[:300]


def post_anchor(supervisor, site, **place):
    return client_for(supervisor).post(
        reverse("anchor-list"), {"site": site.pk, "label": "N9", **place}, format="json"
    )


OFF_THE_ROOF = (
    "Off the roof: the outline runs from {lo} to {hi} m in {axis}; an anchor lies on it "
    "or at most 5 m beyond its edge."
)


@pytest.mark.parametrize(
    ("place", "field", "lo", "hi"),
    [
        ({"x_m": 1e308, "y_m": 0}, "x_m", 0, 30),
        ({"x_m": 0, "y_m": -1e308}, "y_m", 0, 20),
        ({"x_m": 35.5, "y_m": 10}, "x_m", 0, 30),
        ({"x_m": 10, "y_m": -5.5}, "y_m", 0, 20),
    ],
)
def test_an_anchor_off_the_roof_outline_is_refused(job, supervisor, place, field, lo, hi):
    site = SiteFactory(organisation=job.organisation, roof_outline=OUTLINE)
    before = stored()
    response = post_anchor(supervisor, site, **place)
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {field: [OFF_THE_ROOF.format(lo=lo, hi=hi, axis=field[0])]}
    assert stored() == before


def test_an_anchor_on_the_parapet_just_outside_the_outline_is_added(job, supervisor):
    site = SiteFactory(organisation=job.organisation, roof_outline=OUTLINE)
    response = post_anchor(supervisor, site, x_m=35, y_m=10)
    assert response.status_code == 201, response.content[:300]


@pytest.mark.parametrize(
    ("place", "field"),
    [({"x_m": -1e308, "y_m": 0}, "x_m"), ({"x_m": 0, "y_m": 1000.5}, "y_m")],
)
def test_an_anchor_of_a_site_without_an_outline_is_within_a_kilometre(
    job, supervisor, place, field
):
    before = stored()
    response = post_anchor(supervisor, job.site, **place)
    assert response.status_code == 400, response.content[:300]
    assert response.json() == {
        field: ["The site has no roof outline: a coordinate is at most 1000 m from its origin."]
    }
    assert stored() == before
    assert post_anchor(supervisor, job.site, x_m=-1000, y_m=1000).status_code == 201


def test_an_anchor_coordinate_is_never_a_boolean(job, supervisor):
    response = post_anchor(supervisor, job.site, x_m=True, y_m=0)
    assert response.status_code == 400
    assert response.json() == {"x_m": ["A valid number is required."]}


def site_body(**change):
    return {
        "name": "S2",
        "address": "a",
        "height_m": 80,
        "storeys": 20,
        "terrain": "IV",
        "profile": "test-profile",
        "roof_outline": OUTLINE,
        **change,
    }


@pytest.mark.parametrize(
    ("change", "errors"),
    [
        (
            {"height_m": 1e308, "storeys": 10**12},
            {
                "height_m": ["A roof height above 0 and at most 1000 m."],
                "storeys": ["Between 1 and 300 storeys."],
            },
        ),
        (
            {"height_m": -5, "storeys": 0},
            {
                "height_m": ["A roof height above 0 and at most 1000 m."],
                "storeys": ["Between 1 and 300 storeys."],
            },
        ),
        ({"height_m": 0}, {"height_m": ["A roof height above 0 and at most 1000 m."]}),
        ({"height_m": True}, {"height_m": ["A valid number is required."]}),
        ({"storeys": 301}, {"storeys": ["Between 1 and 300 storeys."]}),
    ],
    ids=["huge", "negative and none", "zero high", "true", "too many storeys"],
)
def test_a_site_has_a_plausible_height_and_storeys(job, supervisor, change, errors):
    """The second case answered that a site of this name existed: a check constraint's error
    was taken for the name's uniqueness."""
    before = stored()
    response = client_for(supervisor).post(reverse("site-list"), site_body(**change), format="json")
    assert response.status_code == 400, response.content[:300]
    assert response.json() == errors
    assert stored() == before


def test_a_site_at_the_bounds_is_registered(job, supervisor):
    client = client_for(supervisor)
    response = client.post(
        reverse("site-list"), site_body(height_m=1000, storeys=300), format="json"
    )
    assert response.status_code == 201, response.content[:300]
    response = client.post(
        reverse("site-list"), site_body(name="S3", height_m=3.5, storeys=None), format="json"
    )
    assert response.status_code == 201, response.content[:300]


def test_a_certification_dated_after_today_is_refused(job, supervisor):
    """A certificate records an inspection that happened: one dated next June was recorded,
    became the anchor's current certificate and hid the one in force (its expiry then read
    as the anchor's)."""
    anchor = job.drops.get().anchor
    body = {**certification(25), "certified_on": "2027-06-01", "valid_until": "2028-06-01"}
    before = stored()

    response = client_for(supervisor).post(
        reverse("anchor-certifications", args=[anchor.pk]), body, format="json"
    )

    assert response.status_code == 400, response.content[:300]
    assert response.json() == {
        "certified_on": ["A certification is recorded on or after the day it was made."]
    }
    assert stored() == before


def test_a_certification_dated_after_today_never_hides_the_one_in_force(job):
    """Rows made before the date was checked: the current certificate is the newest one whose
    day has come."""
    anchor = job.drops.get().anchor
    in_force = anchor.current_certification()
    assert in_force is not None
    later = timezone.localdate() + dt.timedelta(days=200)
    AnchorCertification.objects.bulk_create(
        [
            AnchorCertification(
                anchor=anchor,
                certifier="typo",
                rated_capacity_kn=25,
                certified_on=later,
                valid_until=later + dt.timedelta(days=365),
            )
        ]
    )
    anchor = Anchor.objects.get(pk=anchor.pk)

    assert anchor.current_certification() == in_force


@pytest.mark.parametrize(
    ("outline", "place", "off"),
    [
        (OUTLINE, {"x_m": 35, "y_m": -5}, "7.1"),  # within 5 m of each edge's line, 7.1 m out
        (
            [[0, 0], [40, 0], [40, 10], [10, 10], [10, 40], [0, 40]],
            {"x_m": 30, "y_m": 30},
            "20",
        ),  # in the notch of an L-shaped roof
    ],
    ids=["beyond a corner", "in the notch"],
)
def test_an_anchor_more_than_5_m_off_the_roof_is_refused_whatever_its_box(
    job, supervisor, outline, place, off
):
    """Checked per axis against the outline's bounding box, a point 7 m off a corner, or in
    the notch of an L-shaped roof, was on the roof."""
    site = SiteFactory(organisation=job.organisation, roof_outline=outline)
    before = stored()
    response = post_anchor(supervisor, site, **place)
    assert response.status_code == 400, response.content[:300]
    words = (
        f"Off the roof: {off} m outside the roof outline; an anchor lies on the roof or at most"
        " 5 m beyond its edge."
    )
    assert response.json() == {"x_m": [words], "y_m": [words]}
    assert stored() == before
