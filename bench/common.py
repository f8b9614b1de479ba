"""Shared parts of the benchmarks: the bench database, a loopback gunicorn, and statistics."""

import contextlib
import os
import platform
import secrets
import socket
import statistics
import subprocess
import sys
import time
from collections.abc import Iterator
from pathlib import Path
from urllib.parse import urlparse

import django
from django.conf import settings
from django.core.management import call_command
from django.db import connection

ROOT = Path(__file__).resolve().parent.parent


def migrate() -> None:
    """Create the bench database if it is missing and bring its schema up to date."""
    import psycopg

    url = urlparse(os.environ["DATABASE_URL"])
    admin = f"host={url.hostname} port={url.port or 5432} user={url.username} dbname=postgres"
    with psycopg.connect(admin, autocommit=True) as conn:
        exists = conn.execute(
            "SELECT 1 FROM pg_database WHERE datname = 'parapet_bench'"
        ).fetchone()
        if not exists:
            conn.execute("CREATE DATABASE parapet_bench")
    call_command("migrate", verbosity=0)


def percentile(values: list[float], q: float) -> float:
    """The q-th percentile (0-100) by linear interpolation, as numpy's default."""
    ordered = sorted(values)
    if len(ordered) == 1:
        return ordered[0]
    rank = (len(ordered) - 1) * q / 100
    low = int(rank)
    high = min(low + 1, len(ordered) - 1)
    return ordered[low] + (ordered[high] - ordered[low]) * (rank - low)


def summary_ms(seconds: list[float]) -> dict[str, float]:
    ms = [s * 1000 for s in seconds]
    return {
        "p50": percentile(ms, 50),
        "p95": percentile(ms, 95),
        "p99": percentile(ms, 99),
        "mean": statistics.fmean(ms),
        "max": max(ms),
    }


def free_port() -> int:
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return int(sock.getsockname()[1])


@contextlib.contextmanager
def gunicorn(workers: int | None = None, debug: bool = False) -> Iterator[str]:
    """A real gunicorn on a free loopback port for the length of the block; yields its URL.

    Plain HTTP on loopback, so the HTTPS redirect and HSTS of a production deploy are off.
    Its settings are the deploy's (gunicorn.conf.py: one worker per core), ``workers`` apart.
    """
    port = free_port()
    env = {
        **os.environ,
        "DJANGO_DEBUG": "1" if debug else "0",
        # Production mode needs its own key and passphrase; the passphrase must be the one the
        # benchmark's data was signed under in this process.
        "DJANGO_SECRET_KEY": os.environ.get("DJANGO_SECRET_KEY") or secrets.token_urlsafe(50),
        "PARAPET_SIGNING_PASSPHRASE": settings.PARAPET_SIGNING_PASSPHRASE,
        "DJANGO_SECURE_SSL_REDIRECT": "0",
        "DJANGO_HSTS_SECONDS": "0",
        "DJANGO_ALLOWED_HOSTS": "127.0.0.1,localhost",
        "PARAPET_LOGIN_RATE": "100000/min",
        "PARAPET_LOGIN_ADDRESS_RATE": "100000/min",  # every crew signs in from loopback
        "PARAPET_LOG_LEVEL": "ERROR",
    }
    log = open(ROOT / "var" / "bench-gunicorn.log", "ab")  # noqa: SIM115
    process = subprocess.Popen(
        [
            str(Path(sys.executable).with_name("gunicorn")),
            "compliance.wsgi:application",
            "--bind",
            f"127.0.0.1:{port}",
            *(["--workers", str(workers)] if workers else []),
        ],
        cwd=ROOT,
        env=env,
        stdout=log,
        stderr=log,
    )
    url = f"http://127.0.0.1:{port}"
    try:
        deadline = time.monotonic() + 30
        while time.monotonic() < deadline:
            if process.poll() is not None:
                raise RuntimeError("gunicorn exited; see var/bench-gunicorn.log")
            with contextlib.suppress(OSError), socket.create_connection(("127.0.0.1", port), 0.2):
                break
            time.sleep(0.2)
        else:
            raise RuntimeError("gunicorn did not start within 30 s")
        yield url
    finally:
        process.terminate()
        try:
            process.wait(10)
        except subprocess.TimeoutExpired:
            process.kill()
            process.wait(5)
        log.close()


def machine() -> dict[str, str]:
    """What the figures were measured on."""
    cpu = next(
        (
            line.split(":", 1)[1].strip()
            for line in Path("/proc/cpuinfo").read_text().splitlines()
            if line.startswith("model name")
        ),
        platform.processor(),
    )
    memory = subprocess.run(["free", "-h"], capture_output=True, text=True).stdout.splitlines()
    with connection.cursor() as cursor:
        cursor.execute("SHOW server_version")
        pg = cursor.fetchone()[0]
    return {
        "nproc": str(os.cpu_count()),
        "cpu": cpu,
        "memory": memory[1].split()[1] if len(memory) > 1 else "?",
        "python": platform.python_version(),
        "postgresql": pg,
        "django": django.get_version(),
        "load_average_1m": f"{os.getloadavg()[0]:.1f}",
    }


def print_machine() -> None:
    print("machine: " + ", ".join(f"{k}={v}" for k, v in machine().items()))


def table(rows: list[dict[str, object]], columns: list[str]) -> str:
    """A Markdown table of the rows, numbers to one decimal place."""

    def cell(value: object) -> str:
        return f"{value:.1f}" if isinstance(value, float) else str(value)

    lines = ["| " + " | ".join(columns) + " |", "|" + "---|" * len(columns)]
    lines += ["| " + " | ".join(cell(r.get(c, "")) for c in columns) + " |" for r in rows]
    return "\n".join(lines)
