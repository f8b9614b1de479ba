"""The auditor's query: one site-month of records and its sheets, in a database of 1 M entries.

Run: ``.venv/bin/python -m bench.auditor [--refill]``. The first run fills ``parapet_bench`` with
200 sites x 25 job-days x 5 sheets x 40 entries (1,000,000 check entries) and a sealed record per
job-day, by bulk SQL (generate_series); later runs reuse it. Then, in-process as an auditor:
GET /api/v1/records/?site=ID and GET /api/v1/sheets/?job=ID for each job of the month, with
time and query counts (CaptureQueriesContext) and the plan of the slowest query.
"""

import argparse
import datetime as dt
import json
import statistics
import time
import uuid

from django.contrib.auth.hashers import make_password
from django.db import connection, transaction
from django.test import Client
from django.test.utils import CaptureQueriesContext
from rest_framework.authtoken.models import Token

from bench import rig
from bench.common import migrate, print_machine

ORGANISATIONS = 20
SITES_PER_ORGANISATION = 10
DAYS = 25
SHEETS_PER_JOB = 5
MONTH = dt.date(2026, 11, 1)
TAG = "Audit org"


def fill() -> None:
    from checklists.services import record_sheet
    from compliance.jobs.services import close_job
    from compliance.models import Drop, Equipment, Job, Organisation, Site, User
    from compliance.records.services import sign_daily_record
    from compliance.records.signing import create_self_signed

    versions = rig.checklists()
    version = versions["bench-robot"]
    prof = rig.profile()
    password = make_password(rig.PASSWORD)
    started = time.perf_counter()
    with transaction.atomic():
        orgs = Organisation.objects.bulk_create(
            [Organisation(name=f"{TAG} {i}") for i in range(ORGANISATIONS)]
        )
        for org in orgs:
            create_self_signed(organisation=org)
            User.objects.create(
                username=f"audit-sup-{org.pk}",
                password=password,
                organisation=org,
                role="supervisor",
                first_name="Robin",
                last_name="Signer",
            )
            User.objects.create(
                username=f"audit-auditor-{org.pk}",
                password=password,
                organisation=org,
                role="auditor",
            )
            Equipment.objects.create(
                organisation=org, kind="robot", label="robot-audit", ratings=rig.RATINGS["robot"]
            )
            Site.objects.bulk_create(
                [
                    Site(organisation=org, name=f"Audit tower {n}", height_m=120.0, profile=prof)
                    for n in range(SITES_PER_ORGANISATION)
                ]
            )
        # one real record, signed the ordinary way, whose canonical JSON the others copy
        sample_site = Site.objects.create(
            organisation=orgs[0], name="Audit sample", height_m=120.0, profile=prof
        )
        boss = User.objects.get(username=f"audit-sup-{orgs[0].pk}")
        sample = Job.objects.create(
            organisation=orgs[0], site=sample_site, date=MONTH, supervisor=boss
        )
        robot = Equipment.objects.get(organisation=orgs[0], kind="robot")
        kit = {
            kind: robot
            if kind == "robot"
            else Equipment.objects.create(
                organisation=orgs[0], kind=kind, label=f"{kind}-audit", ratings=rig.RATINGS[kind]
            )
            for kind in rig.RATINGS
        }
        from compliance.models import Anchor

        anchors = [Anchor.objects.create(site=sample_site, label=f"S{i}") for i in range(2)]
        Drop.objects.create(
            job=sample,
            label="D1",
            anchor=anchors[0],
            safety_anchor=anchors[1],
            length_m=100.0,
            **kit,
        )
        for _ in range(SHEETS_PER_JOB):
            record_sheet(
                job=sample,
                version=version,
                by=boss,
                entries=rig.entries_for(version.items),
                client_uuid=uuid.uuid4(),
                equipment=robot,
            )
        close_job(job=sample, by=boss, reason="Sample day.")
    from django.conf import settings

    settings.CELERY_TASK_ALWAYS_EAGER = False  # the sample needs no PDF
    # Only the robot's checks are filled, so the day was never ready to start: it is signed
    # as reviewed with exceptions, which costs the same to seal and sign.
    sample_record = sign_daily_record(
        job=sample,
        by=boss,
        password=rig.PASSWORD,
        meaning="reviewed_exceptions",
        remarks="Bench sample: only the robot's checks were filled.",
    )
    with connection.cursor() as cur:
        cur.execute(
            """
            INSERT INTO compliance_job (organisation_id, site_id, date, state, supervisor_id,
                                        notes, created_at)
            SELECT s.organisation_id, s.id, %s::date + d, 'closed', u.id, '', now()
            FROM compliance_site s
            JOIN compliance_organisation o ON o.id = s.organisation_id AND o.name LIKE %s
            JOIN compliance_user u ON u.organisation_id = o.id AND u.role = 'supervisor'
            CROSS JOIN generate_series(0, %s - 1) d
            WHERE s.name LIKE 'Audit tower %%'
            """,
            [MONTH, f"{TAG} %", DAYS],
        )
        print(f"  jobs: {cur.rowcount}", flush=True)
        cur.execute(
            """
            INSERT INTO checklists_checksheet (client_uuid, job_id, version_id, version_hash,
                subject_kind, anchor_id, equipment_id, filled_by_id, device_time, received_at,
                verdict, blocking_failures, remarks)
            SELECT gen_random_uuid(), j.id, %s, %s, 'robot', NULL, e.id, j.supervisor_id,
                   j.date + time '07:00' + n * interval '6 min',
                   j.date + time '07:01' + n * interval '6 min', 'pass', 0, ''
            FROM compliance_job j
            JOIN compliance_site s ON s.id = j.site_id AND s.name LIKE 'Audit tower %%'
            JOIN compliance_equipment e ON e.organisation_id = j.organisation_id
                 AND e.label = 'robot-audit'
            CROSS JOIN generate_series(0, %s - 1) n
            """,
            [version.pk, version.content_hash, SHEETS_PER_JOB],
        )
        print(f"  sheets: {cur.rowcount}", flush=True)
        cur.execute(
            """
            INSERT INTO checklists_itementry (sheet_id, item_key, kind, value, unit, verdict,
                blocking, margin, message, working)
            SELECT sh.id, it.item->>'key', it.item->>'kind',
                   CASE it.item->>'kind'
                        WHEN 'tick' THEN '"pass"'::jsonb
                        WHEN 'reading' THEN to_jsonb(42.0 + (sh.id %% 7))
                        WHEN 'series' THEN %s::jsonb
                        ELSE '{"time_to_limit_s": 1500}'::jsonb END,
                   coalesce(it.item->>'unit', ''),
                   CASE WHEN it.item->>'kind' IN ('tick', 'reading', 'calc') THEN 'pass'
                        ELSE 'recorded' END,
                   (it.item->>'blocking')::boolean,
                   CASE WHEN it.item->>'kind' = 'reading' THEN 0.5 END,
                   '',
                   CASE WHEN it.item->>'kind' = 'reading'
                        THEN '{"limits": {"max": {"value": 5000}}}'::jsonb
                        ELSE '{}'::jsonb END
            FROM checklists_checksheet sh
            JOIN compliance_job j ON j.id = sh.job_id
            JOIN compliance_site s ON s.id = j.site_id AND s.name LIKE 'Audit tower %%'
            CROSS JOIN jsonb_array_elements(%s::jsonb) WITH ORDINALITY it(item, n)
            """,
            [json.dumps(rig.DECAY), json.dumps(version.items)],
        )
        print(f"  entries: {cur.rowcount}", flush=True)
        cur.execute(
            """
            INSERT INTO compliance_dailyrecord (kind, organisation_id, site_id, job_id,
                amends_id, sequence, previous_seal, canonical_json, seal, seal_signature,
                credential_id, signer_id, signer_name, signer_role, meaning, signed_at)
            SELECT 'record', j.organisation_id, j.site_id, j.id, NULL,
                   row_number() OVER (PARTITION BY j.site_id ORDER BY j.date), '',
                   %s, md5(j.id::text || 'a') || md5(j.id::text || 'b'), %s, c.id,
                   j.supervisor_id, 'Robin Signer', 'supervisor', %s,
                   j.date + time '18:00'
            FROM compliance_job j
            JOIN compliance_site s ON s.id = j.site_id AND s.name LIKE 'Audit tower %%'
            JOIN compliance_signingcredential c ON c.organisation_id = j.organisation_id
            """,
            [
                sample_record.canonical_json,
                sample_record.seal_signature,
                sample_record.meaning,
            ],
        )
        print(f"  records: {cur.rowcount}", flush=True)
        cur.execute("ANALYZE")
    print(f"filled in {time.perf_counter() - started:.0f} s", flush=True)


def measure(client: Client, url: str, repeat: int = 5) -> dict:
    times, counts, slowest = [], [], []
    for _ in range(repeat):
        connection.queries_log.clear()
        with CaptureQueriesContext(connection) as queries:
            started = time.perf_counter()
            response = client.get(url)
            times.append(time.perf_counter() - started)
        assert response.status_code == 200, response.content[:300]
        counts.append(len(queries))
        slowest = sorted(queries.captured_queries, key=lambda q: -float(q["time"]))[:1]
    return {
        "url": url,
        "ms": statistics.median(times) * 1000,
        "queries": max(counts),
        "sql_ms": sum(float(q["time"]) for q in queries.captured_queries) * 1000,
        "bytes": len(response.content),
        "body": response.json(),
        "slowest": slowest[0] if slowest else None,
    }


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--refill", action="store_true", help="fill again even if filled")
    args = parser.parse_args()
    migrate()
    print_machine()
    from compliance.models import Organisation, Site, User

    if args.refill or not Organisation.objects.filter(name=f"{TAG} 0").exists():
        if args.refill:
            print("--refill: drop and create parapet_bench yourself, then run again")
            return
        print("filling parapet_bench (once) ...", flush=True)
        fill()
    with connection.cursor() as cur:
        cur.execute(
            "SELECT count(*), pg_size_pretty(pg_total_relation_size('checklists_itementry')) "
            "FROM checklists_itementry"
        )
        entries, size = cur.fetchone()
        cur.execute("SELECT count(*) FROM compliance_site")
        sites = cur.fetchone()[0]
    print(f"database: {entries:,} check entries ({size} with indexes), {sites} sites")
    org = Organisation.objects.get(name=f"{TAG} 0")
    auditor = User.objects.get(username=f"audit-auditor-{org.pk}")
    site = Site.objects.filter(organisation=org, name="Audit tower 3").get()
    client = Client()
    client.defaults["HTTP_AUTHORIZATION"] = (
        f"Token {Token.objects.get_or_create(user=auditor)[0].key}"
    )
    client.get("/api/v1/me/")  # warm the URL conf and the connection
    records = measure(client, f"/api/v1/records/?site={site.pk}")
    jobs = [r["job"] for r in records["body"]["results"]]
    assert len(jobs) == DAYS, len(jobs)
    sheet_lists = [measure(client, f"/api/v1/sheets/?job={job}") for job in jobs]
    assert all(len(s["body"]["results"]) == SHEETS_PER_JOB for s in sheet_lists)
    assert all(len(r["entries"]) == 40 for s in sheet_lists for r in s["body"]["results"])
    total_ms = records["ms"] + sum(s["ms"] for s in sheet_lists)
    total_q = records["queries"] + sum(s["queries"] for s in sheet_lists)
    print(f"\nsite-month: 1 record list + {len(jobs)} sheet lists (median of 5 each)\n")
    print("| request | ms | queries | SQL ms | response KiB |\n|---|---|---|---|---|")
    print(
        f"| GET /api/v1/records/?site=ID ({len(jobs)} records) | {records['ms']:.1f} | "
        f"{records['queries']} | {records['sql_ms']:.1f} | {records['bytes'] / 1024:.0f} |"
    )
    per = sheet_lists
    print(
        f"| GET /api/v1/sheets/?job=ID, per job (5 sheets x 40 entries) | "
        f"{statistics.median(s['ms'] for s in per):.1f} | {max(s['queries'] for s in per)} | "
        f"{statistics.median(s['sql_ms'] for s in per):.1f} | "
        f"{statistics.median(s['bytes'] for s in per) / 1024:.0f} |"
    )
    print(f"| whole site-month, one list per job | {total_ms:.0f} | {total_q} | | |")
    # The same month in two requests: the site's records and sheets filtered by period.
    month_end = MONTH + dt.timedelta(days=DAYS + 5)
    period = f"site={site.pk}&start={MONTH.isoformat()}&end={month_end.isoformat()}"
    month_records = measure(client, f"/api/v1/records/?{period}")
    month_sheets = measure(client, f"/api/v1/sheets/?{period}&limit=1000")
    assert month_records["body"]["count"] == DAYS, month_records["body"]["count"]
    assert month_sheets["body"]["count"] == DAYS * SHEETS_PER_JOB, month_sheets["body"]["count"]
    two_ms = month_records["ms"] + month_sheets["ms"]
    two_q = month_records["queries"] + month_sheets["queries"]
    print(
        f"| GET /api/v1/records/?site=&start=&end= | {month_records['ms']:.1f} | "
        f"{month_records['queries']} | {month_records['sql_ms']:.1f} | "
        f"{month_records['bytes'] / 1024:.0f} |"
    )
    print(
        f"| GET /api/v1/sheets/?site=&start=&end= ({DAYS * SHEETS_PER_JOB} sheets) | "
        f"{month_sheets['ms']:.1f} | {month_sheets['queries']} | {month_sheets['sql_ms']:.1f} | "
        f"{month_sheets['bytes'] / 1024:.0f} |"
    )
    print(f"| whole site-month, two requests | {two_ms:.0f} | {two_q} | | |")
    two_sql = month_records["sql_ms"] + month_sheets["sql_ms"]
    print(
        f"\nx; site-month two requests {two_ms:.0f} ms, {two_q} queries; floor (their SQL time)"
        f" {two_sql:.0f} ms; ratio {two_ms / max(two_sql, 1):.1f}x (target 100 ms, 2 requests)"
    )
    print(f"\ntwo requests / one list per job = {two_ms / total_ms:.2f}x the time")
    for name, result in (("records", records), ("sheets", per[0])):
        slow = result["slowest"]
        print(f"\nslowest query of the {name} list ({float(slow['time']) * 1000:.1f} ms):")
        print("  " + slow["sql"][:300])
        with connection.cursor() as cur:
            cur.execute("EXPLAIN (ANALYZE, BUFFERS) " + slow["sql"])
            print("\n".join("    " + row[0] for row in cur.fetchall()[:40]))


if __name__ == "__main__":
    main()
