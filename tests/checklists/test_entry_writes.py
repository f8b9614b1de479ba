"""A sheet's entries written by one COPY on PostgreSQL are the rows the ORM writes."""

import pytest
from django.db import connection

from checklists.models import CheckSheet, ItemEntry
from checklists.services import _entry, _insert_entries
from checklists.verdicts import ItemResult

pytestmark = [pytest.mark.postgres, pytest.mark.django_db]

ODD_VALUES = [
    None,
    "pass",
    'Ünïcode — ½ kN, "quoted", back\\slash, tab\tand newline\n',
    0.1,
    1e-7,
    -0.0,
    2**53,
    [[0, 70.0], [5, 69.4]],
    {"nested": {"list": [1, 2.5, None, True]}, "empty": {}},
]


def _rows(sheet):
    with connection.cursor() as cursor:
        cursor.execute(
            "SELECT item_key, kind, value IS NULL, value::text, unit, verdict, blocking, margin,"
            " message, working::text FROM checklists_itementry WHERE sheet_id = %s"
            " ORDER BY item_key",
            [sheet.pk],
        )
        return cursor.fetchall()


def _results():
    return [
        ItemResult(
            key=f"item_{n}",
            kind="reading",
            label=f"Item {n}",
            blocking=bool(n % 3),
            verdict="pass" if n % 2 else "fail",
            value=value,
            unit="kN",
            margin=None if n % 4 == 0 else n / 7,
            message=f"message {n} with ümlauts",
            working={"inputs": {"value": value}, "steps": [f"step {n}"]},
        )
        for n, value in enumerate(ODD_VALUES)
    ]


def _entries_by_the_orm(sheet):
    # The model instances the SQLite path and the log book's copy make, bulk-inserted.
    return [_entry(sheet, r) for r in _results()]


def _sheet(job, version, operator, n):
    return CheckSheet.objects.create(
        client_uuid=f"00000000-0000-4000-8000-00000000000{n}",
        job=job,
        version=version,
        version_hash=version.content_hash,
        subject_kind="site",
        filled_by=operator,
        verdict="pass",
        blocking_failures=0,
    )


def test_the_copied_rows_are_the_rows_the_orm_writes(job, simple_checklists, operator):
    version = simple_checklists["site"]
    fresh_a = _sheet(job, version, operator, 1)
    fresh_b = _sheet(job, version, operator, 2)

    _insert_entries(fresh_a, _results())
    ItemEntry.objects.bulk_create(_entries_by_the_orm(fresh_b))

    assert len(_rows(fresh_a)) == len(ODD_VALUES)
    assert _rows(fresh_a) == _rows(fresh_b)
    # What a reader gets back is the same too.
    read = {e.item_key: (e.value, e.working) for e in ItemEntry.objects.filter(sheet=fresh_a)}
    assert read == {e.item_key: (e.value, e.working) for e in _entries_by_the_orm(fresh_b)}
