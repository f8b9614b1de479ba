"""Morning sync: N crews each send a day's batch (8 sheets x 40 items) to POST /api/v1/sync/.

Run: ``.venv/bin/python -m bench.sync [--short]``. Real gunicorn on loopback, PostgreSQL,
token auth. Prints throughput and p50/p95/p99 per N, the floor (the same rows written by one
multi-row INSERT plus one COPY) with the ratio, and an in-process profile of one batch.
"""

import argparse
import cProfile
import io
import json
import os
import pstats
import statistics
import threading
import time
import uuid
from concurrent.futures import ThreadPoolExecutor

import requests
from django.db import connection
from django.test.utils import CaptureQueriesContext

from bench import rig
from bench.common import gunicorn, migrate, print_machine, summary_ms, table

SHEET_COLUMNS = [
    "client_uuid",
    "job_id",
    "version_id",
    "version_hash",
    "subject_kind",
    "anchor_id",
    "equipment_id",
    "filled_by_id",
    "device_time",
    "received_at",
    "verdict",
    "blocking_failures",
    "remarks",
]
ENTRY_COLUMNS = [
    "item_key",
    "kind",
    "value",
    "unit",
    "verdict",
    "blocking",
    "margin",
    "message",
    "working",
]
_local = threading.local()


def session() -> requests.Session:
    if not hasattr(_local, "session"):
        _local.session = requests.Session()
    return _local.session


def login(url: str, username: str) -> str:
    response = session().post(
        f"{url}/api/v1/auth/token/",
        json={"username": username, "password": rig.PASSWORD},
        timeout=30,
    )
    response.raise_for_status()
    return str(response.json()["token"])


def send(url: str, token: str, records: list[dict]) -> tuple[float, int]:
    started = time.perf_counter()
    response = session().post(
        f"{url}/api/v1/sync/",
        json={"records": records},
        headers={"Authorization": f"Token {token}"},
        timeout=120,
    )
    elapsed = time.perf_counter() - started
    response.raise_for_status()
    applied = sum(r["status"] == "applied" for r in response.json()["results"])
    return elapsed, applied


def run_n(url: str, crews: list[rig.Crew], concurrency: int) -> dict[str, object]:
    with ThreadPoolExecutor(concurrency) as pool:
        tokens = list(pool.map(lambda c: login(url, c.username), crews))
        started = time.perf_counter()
        results = list(
            pool.map(lambda ct: send(url, ct[1], ct[0].records), zip(crews, tokens, strict=True))
        )
        wall = time.perf_counter() - started
    latencies = [r[0] for r in results]
    applied = sum(r[1] for r in results)
    expected = len(crews) * rig.SHEETS_PER_BATCH
    if applied != expected:
        raise RuntimeError(f"only {applied} of {expected} sheets were applied")
    return {
        "N": len(crews),
        "clients": concurrency,
        "wall_s": wall,
        "batches_per_s": len(crews) / wall,
        "sheets_per_s": expected / wall,
        "entries_per_s": expected * rig.ITEMS_PER_SHEET / wall,
        **summary_ms(latencies),
    }


def floor(crews: list[rig.Crew], tries: int = 3) -> dict[str, float]:
    """Write copies of the rows the sync stored with one INSERT and one COPY, then remove them;
    the fastest of ``tries`` (one write alone varied by a third on this machine)."""
    from checklists.models import CheckSheet, ItemEntry

    jobs = [c.job_id for c in crews]
    sheets = list(CheckSheet.objects.filter(job_id__in=jobs).order_by("id").values())
    entries = list(
        ItemEntry.objects.filter(sheet__job_id__in=jobs).order_by("sheet_id", "id").values()
    )
    by_sheet: dict[int, list[dict]] = {}
    for entry in entries:
        by_sheet.setdefault(entry["sheet_id"], []).append(entry)
    sheet_rows = [
        [str(uuid.uuid4()) if c == "client_uuid" else s[c] for c in SHEET_COLUMNS] for s in sheets
    ]
    entry_rows = [
        [
            [json.dumps(e[c]) if c in ("value", "working") else e[c] for c in ENTRY_COLUMNS]
            for e in by_sheet[s["id"]]
        ]
        for s in sheets
    ]
    placeholders = ",".join(["(" + ",".join(["%s"] * len(SHEET_COLUMNS)) + ")"] * len(sheets))
    connection.ensure_connection()
    raw = connection.connection  # psycopg 3
    times = []
    for _ in range(tries):
        started = time.perf_counter()
        with raw.transaction(), raw.cursor() as cur:
            cur.execute(
                f"INSERT INTO checklists_checksheet ({','.join(SHEET_COLUMNS)}) "
                f"VALUES {placeholders} RETURNING id",
                [v for row in sheet_rows for v in row],
            )
            ids = [r[0] for r in cur.fetchall()]
            with cur.copy(
                f"COPY checklists_itementry (sheet_id,{','.join(ENTRY_COLUMNS)}) FROM STDIN"
            ) as copy:
                for sheet_id, rows in zip(ids, entry_rows, strict=True):
                    for row in rows:
                        copy.write_row([sheet_id, *row])
        times.append(time.perf_counter() - started)
        with raw.transaction(), raw.cursor() as cur:
            cur.execute("DELETE FROM checklists_itementry WHERE sheet_id = ANY(%s)", [ids])
            cur.execute("DELETE FROM checklists_checksheet WHERE id = ANY(%s)", [ids])
        sheet_rows = [[str(uuid.uuid4()), *row[1:]] for row in sheet_rows]  # uuids are unique
    elapsed = min(times)
    return {"floor_s": elapsed, "rows": len(sheets) + len(entries)}


def profile_one_batch(tag: str) -> None:
    """One batch through the Django test client in-process: queries and where the time goes."""
    from django.test import Client

    warm, timed_crew, profiled = rig.make_crews(3, f"{tag}-profile")
    client = Client()

    def post(crew: rig.Crew):  # type: ignore[no-untyped-def]
        client.defaults["HTTP_AUTHORIZATION"] = f"Token {rig.token_for(crew.user_id)}"
        body = json.dumps({"records": crew.records})
        return client.post("/api/v1/sync/", body, content_type="application/json")

    post(warm)
    connection.queries_log.clear()  # a full log (9000 entries) would make the capture empty
    with CaptureQueriesContext(connection) as queries:
        started = time.perf_counter()
        response = post(timed_crew)
        elapsed = time.perf_counter() - started
    assert response.status_code == 200, response.content[:300]
    shapes: dict[str, list[float]] = {}
    for q in queries.captured_queries:
        sql = q["sql"]
        quoted = next((w for w in sql.split() if w.startswith('"') and "_" in w), "")
        table = quoted.split(".")[0].strip('"')
        shape = f"{sql.split(None, 1)[0]} {table}"
        shapes.setdefault(shape, []).append(float(q["time"]))
    print("\nqueries of that batch by statement and first table (count, total ms):")
    for shape, times in sorted(shapes.items(), key=lambda kv: -len(kv[1]))[:12]:
        print(f"  {len(times):4d}  {sum(times) * 1000:7.1f} ms  {shape}")
    profiler = cProfile.Profile()
    profiler.enable()
    post(profiled)
    profiler.disable()
    sql_s = sum(float(q["time"]) for q in queries.captured_queries)
    kinds: dict[str, int] = {}
    for q in queries.captured_queries:
        verb = q["sql"].split(None, 1)[0].upper()
        kinds[verb] = kinds.get(verb, 0) + 1
    print(
        f"\none batch in-process (Django test client, warm): {elapsed * 1000:.0f} ms, "
        f"{len(queries)} queries ({', '.join(f'{k} {v}' for k, v in sorted(kinds.items()))}), "
        f"sum of the query times Django logged {sql_s * 1000:.0f} ms (rounded per query to 1 ms; "
        "on a loaded machine it includes waiting for a core)"
    )
    print(f"x; one warm batch of 8 sheets: {len(queries)} queries (target 60, was 178)")
    out = io.StringIO()
    stats = pstats.Stats(profiler, stream=out).sort_stats("cumulative")
    stats.print_stats(r"/(compliance|checklists)/[a-z_/]+\.py", 25)
    stats.sort_stats("tottime").print_stats(15)
    print("\n".join(line for line in out.getvalue().splitlines() if line.strip())[:9000])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--short", action="store_true", help="N = 1, 10, 50 only")
    parser.add_argument(
        "--workers", type=int, default=None, help="the deploy's gunicorn.conf.py: one per core"
    )
    parser.add_argument("--clients", type=int, default=8, help="concurrent requests at most")
    parser.add_argument(
        "--repeat", type=int, default=3, help="rounds per size, each with its own crews"
    )
    parser.add_argument("--profile-only", action="store_true", help="just the in-process profile")
    args = parser.parse_args()
    migrate()
    print_machine()
    if args.profile_only:
        profile_one_batch(f"p{int(time.time())}")
        return
    sizes = [1, 10, 50] if args.short else [1, 10, 50, 200]
    tag = f"s{int(time.time())}"
    rounds = max(1, args.repeat)
    print(f"building {(sum(sizes)) * rounds + 4} crews ...", flush=True)
    warm = rig.make_crews(4, f"{tag}-warm")
    batches = {n: [rig.make_crews(n, f"{tag}-n{n}-r{r}") for r in range(rounds)] for n in sizes}
    rows = []
    with gunicorn(workers=args.workers) as url:
        run_n(url, warm, min(4, args.clients))  # loads Django in every worker
        for n in sizes:
            # Rounds of the same size alternate with nothing else: each round its own crews
            # (a batch is applied once), its floor written from that round's own rows.
            tries = []
            for crews in batches[n]:
                row = run_n(url, crews, min(n, args.clients))
                row.update(floor(crews))
                row["ratio"] = float(row["wall_s"]) / row["floor_s"]
                tries.append(row)
            row = {
                k: statistics.median(float(t[k]) for t in tries)  # type: ignore[arg-type]
                for k in tries[0]
            }
            rows.append(row)
            ratios = sorted(float(t["ratio"]) for t in tries)
            spread = f" (rounds {', '.join(f'{r:.1f}x' for r in ratios)})" if len(tries) > 1 else ""
            print(
                f"x; sync N={n}: {row['sheets_per_s']:.1f} sheets/s, p50 {row['p50']:.0f} ms, "
                f"p95 {row['p95']:.0f} ms, p99 {row['p99']:.0f} ms; floor "
                f"{row['floor_s'] * 1000:.1f} ms for {int(row['rows'])} rows; ratio "
                f"{row['ratio']:.1f}x{spread}, median of {len(tries)} "
                "(target 10x, p95 500 ms at N=50)",
                flush=True,
            )
    workers = args.workers or f"{len(os.sched_getaffinity(0))} (one per core, gunicorn.conf.py)"
    print(f"\ngunicorn workers: {workers}; at most {args.clients} requests in flight\n")
    print(
        table(
            rows,
            [
                "N",
                "clients",
                "wall_s",
                "batches_per_s",
                "sheets_per_s",
                "p50",
                "p95",
                "p99",
                "floor_s",
                "ratio",
            ],
        )
    )
    profile_one_batch(tag)


if __name__ == "__main__":
    main()
