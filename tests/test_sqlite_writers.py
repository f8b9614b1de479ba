"""Two writers at once on the demo's SQLite wait for each other instead of failing.

With SQLite's default deferred transactions, a transaction that has read and then wants to
write while another holds the write lock gets "database is locked" at once (waiting could
deadlock); the demo answered two phones syncing at once with a 500. Its settings begin every
transaction IMMEDIATE (Django's ``transaction_mode`` option), so the second waits its turn.
Source: SQLite documentation, "File Locking And Concurrency In SQLite Version 3" and "BEGIN
TRANSACTION" (sqlite.org/lockingv3.html, sqlite.org/lang_transaction.html).
"""

import threading
import time

from django.conf import settings
from django.db import transaction
from django.db.utils import ConnectionHandler


def test_two_writers_at_once_both_land(tmp_path, monkeypatch, django_db_blocker):
    with django_db_blocker.unblock():  # its own database file, not the test database
        two_writers(tmp_path, monkeypatch)


def two_writers(tmp_path, monkeypatch) -> None:
    handler = ConnectionHandler(
        {
            "default": {
                "ENGINE": "django.db.backends.sqlite3",
                "NAME": str(tmp_path / "demo.sqlite3"),
                "OPTIONS": settings.SQLITE_OPTIONS,
            }
        }
    )
    monkeypatch.setattr(transaction, "connections", handler)
    with handler["default"].cursor() as cursor:
        cursor.execute("CREATE TABLE sheet (n integer)")
    handler["default"].close()
    first_wrote = threading.Event()
    errors: list[Exception] = []

    def first() -> None:
        try:
            with transaction.atomic(), handler["default"].cursor() as cursor:
                cursor.execute("INSERT INTO sheet VALUES (1)")
                first_wrote.set()
                time.sleep(0.5)
        except Exception as exc:
            errors.append(exc)
        finally:
            first_wrote.set()
            handler["default"].close()

    def second() -> None:
        first_wrote.wait(5)
        try:
            with transaction.atomic(), handler["default"].cursor() as cursor:
                cursor.execute("SELECT count(*) FROM sheet")  # a sync reads before it writes
                cursor.execute("INSERT INTO sheet VALUES (2)")
        except Exception as exc:
            errors.append(exc)
        finally:
            handler["default"].close()

    threads = [threading.Thread(target=first), threading.Thread(target=second)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(30)
    assert errors == []
    with handler["default"].cursor() as cursor:
        cursor.execute("SELECT n FROM sheet ORDER BY n")
        assert cursor.fetchall() == [(1,), (2,)]
    handler["default"].close()
