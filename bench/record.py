"""The daily record: seal, render and sign a record of 10 drops and 30 sheets; verify it.

Run: ``.venv/bin/python -m bench.record [--repeat 3]``. In-process on the bench database.
Prints seconds per record for each stage and the ratio against reportlab alone drawing the
same tables (plain text cells, and Paragraph cells as the record uses).
"""

import argparse
import io
import json
import statistics
import time
import uuid
from collections.abc import Callable
from typing import Any
from unittest import mock

from django.utils import timezone
from pypdf import PdfReader
from reportlab.lib import colors
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import getSampleStyleSheet
from reportlab.lib.units import mm
from reportlab.platypus import Paragraph, SimpleDocTemplate, Spacer, Table, TableStyle

from bench import rig
from bench.common import migrate, print_machine
from checklists.services import record_sheet
from compliance.jobs.selectors import job_requirements
from compliance.jobs.services import close_job
from compliance.models import (
    Anchor,
    AnchorCertification,
    Drop,
    Equipment,
    Job,
    Organisation,
    PageCheck,
    RecordPdf,
    Site,
    User,
)
from compliance.records import services as record_services
from compliance.records.checks import verify_pdf
from compliance.records.files import ensure_pdf, render_signed_pdf
from compliance.records.pdf import render
from compliance.records.services import day_content, sign_daily_record
from compliance.records.signing import create_self_signed, sign_pdf, sign_seal
from compliance.records.verifier import Report, check_signature

DROPS = 10
SHEETS = 30


def big_job(tag: str) -> tuple[Job, User, User]:
    """A job with 10 drops, each with its own anchor pair and kit."""
    from django.contrib.auth.hashers import make_password

    day = timezone.localdate()
    org = Organisation.objects.create(name=f"Bench record {tag}")
    password = make_password(rig.PASSWORD)
    boss = User.objects.create(
        username=f"{tag}-sup",
        first_name="Robin",
        last_name="Bench",
        password=password,
        organisation=org,
        role="supervisor",
    )
    crew = User.objects.create(
        username=f"{tag}-op", password=password, organisation=org, role="operator"
    )
    site = Site.objects.create(
        organisation=org, name="Tower R", height_m=120.0, profile=rig.profile()
    )
    job = Job.objects.create(organisation=org, site=site, date=day, supervisor=boss)
    for n in range(DROPS):
        anchors = [Anchor.objects.create(site=site, label=f"R{n}-{i}") for i in range(2)]
        for anchor in anchors:
            AnchorCertification.objects.create(
                anchor=anchor,
                certifier="Bench Certifier",
                rated_capacity_kn=22.2,
                certified_on=day.replace(year=day.year - 1),
                valid_until=day.replace(year=day.year + 1),
            )
        kit = {
            kind: Equipment.objects.create(
                organisation=org, kind=kind, label=f"{kind}-{n}", ratings=rig.RATINGS[kind]
            )
            for kind in rig.RATINGS
        }
        Drop.objects.create(
            job=job,
            label=f"D{n + 1}",
            anchor=anchors[0],
            safety_anchor=anchors[1],
            length_m=100.0,
            **kit,
        )
    return job, boss, crew


def fill(job: Job, crew: User) -> None:
    rig.checklists()
    for req in job_requirements(job)[:SHEETS]:
        from checklists.models import ChecklistVersion

        version = ChecklistVersion.objects.select_related("checklist").get(pk=req.version_id)
        record_sheet(
            job=job,
            version=version,
            by=crew,
            entries=rig.entries_for(version.items),
            client_uuid=uuid.uuid4(),
            anchor=req.subject.anchor,
            equipment=req.subject.equipment,
            device_time=timezone.now(),
        )
    assert job.sheets.count() == SHEETS


def timed(call: Callable[[], Any], repeat: int) -> tuple[float, Any]:
    """Median seconds over ``repeat`` calls, and the last result."""
    times, result = [], None
    for _ in range(repeat):
        started = time.perf_counter()
        result = call()
        times.append(time.perf_counter() - started)
    return statistics.median(times), result


def plain_tables(document: dict[str, Any], paragraphs: bool) -> bytes:
    """reportlab alone: one heading and one 4-column table per sheet and, from record format
    /7, which prints them, one paragraph of the figures the sheet was judged on; nothing else."""
    styles = getSampleStyleSheet()
    small = styles["BodyText"].clone("small", fontSize=7, leading=8)
    story: list[Any] = []
    for sheet in document["record"]["sheets"]:
        story.append(Paragraph(f"#{sheet['id']} {sheet['title']} {sheet['verdict']}", styles["h3"]))
        rows: list[list[Any]] = [["Item", "Entry", "Verdict", "Margin"]]
        for e in sheet["entries"]:
            value = json.dumps(e["value"]) if e["kind"] != "calc" else "computed"
            cells = [
                e["item"],
                value[:120],
                e["verdict"],
                "" if e["margin"] is None else f"{e['margin']:+.0%}",
            ]
            rows.append(
                [Paragraph(c, small) for c in cells[:2]] + cells[2:] if paragraphs else cells
            )
        table = Table(rows, colWidths=[60 * mm, 80 * mm, 20 * mm, 20 * mm], repeatRows=1)
        table.setStyle(
            TableStyle(
                [("GRID", (0, 0), (-1, -1), 0.25, colors.grey), ("FONTSIZE", (0, 0), (-1, -1), 7)]
            )
        )
        story.append(table)
        if sheet.get("judged_on"):
            story.append(Paragraph(f"Judged on: {json.dumps(sheet['judged_on'])}", small))
        story.append(Spacer(1, 3 * mm))
    buffer = io.BytesIO()
    SimpleDocTemplate(buffer, pagesize=A4).build(story)
    return buffer.getvalue()


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    migrate()
    print_machine()
    tag = f"r{int(time.time())}"
    job, boss, crew = big_job(tag)
    fill(job, crew)
    # Closed before any work (the bench starts nothing), so by the supervisor.
    close_job(job=job, by=boss, reason="Bench day done.")
    create_self_signed(organisation=job.organisation)
    # Sign-off as the supervisor waits for it: the render is queued at commit and measured
    # below on its own, so it is left out here.
    with mock.patch.object(record_services, "_queue_render"):
        started = time.perf_counter()
        record = sign_daily_record(
            job=job,
            by=boss,
            password=rig.PASSWORD,
            meaning="reviewed_exceptions",
            remarks="Bench day: 30 of the day's checks filled, nothing started.",
        )
        sign_s = time.perf_counter() - started
    document = json.loads(record.canonical_json)
    figures: dict[str, float] = {"sign-off: seal and sign, render excluded": sign_s}
    # Its floor: what a sign-off cannot skip, the password check (Argon2, the production
    # hasher) and one RSA signature over the seal with the key decrypted.
    figures["sign-off floor: password check + one seal signature"], _ = timed(
        lambda: (boss.check_password(rig.PASSWORD), sign_seal(record.seal, record.credential)),
        args.repeat,
    )
    figures["day_content (the rows behind it)"], _ = timed(lambda: day_content(job), args.repeat)
    figures["render + sign (render_signed_pdf)"], signed = timed(
        lambda: render_signed_pdf(record), args.repeat
    )
    figures["render only (record_pdf.render)"], unsigned = timed(
        lambda: render(document, record.seal), args.repeat
    )
    figures["PAdES signature only (sign_pdf)"], _ = timed(
        lambda: sign_pdf(
            unsigned,
            record.credential,
            signer_name=record.signer_name,
            reason=record.meaning,
            location=record.site.name,
        ),
        args.repeat,
    )
    figures["reportlab alone, same tables, text cells"], plain = timed(
        lambda: plain_tables(document, paragraphs=False), args.repeat
    )
    figures["reportlab alone, same tables, Paragraph cells"], para = timed(
        lambda: plain_tables(document, paragraphs=True), args.repeat
    )
    # The file the server stores: rendered, signed and kept as checked, as the render task
    # does, so its first check on the server (an auditor's download) draws nothing.
    with RecordPdf.objects.get(record=ensure_pdf(record).record).file.open("rb") as stored:
        signed = stored.read()
    assert PageCheck.objects.filter(seal=record.seal).count() == 1
    verify_pdf(signed, name="record.pdf")  # the process's first verification (cold caches)
    figures["verify with the database, the file the server made (kept as checked)"], report = timed(
        lambda: verify_pdf(signed, name="record.pdf"), args.repeat
    )
    assert report.ok, report.verdict()

    def first_check() -> Report:
        """A file this server did not make: nothing kept, the pages drawn again."""
        PageCheck.objects.filter(seal=record.seal).delete()
        started = time.perf_counter()
        report = verify_pdf(signed, name="record.pdf")
        drawn.append(time.perf_counter() - started)
        return report

    drawn: list[float] = []
    for _ in range(args.repeat):
        assert first_check().ok
    figures["verify with the database, a file not seen before (pages drawn again)"] = (
        statistics.median(drawn)
    )
    figures["verify offline (no database: pages drawn again)"], _ = timed(
        lambda: verify_pdf(
            signed,
            name="record.pdf",
            use_database=False,
            trusted_pems=[record.credential.certificate_pem],
        ),
        args.repeat,
    )
    figures["verify floor: the PDF signature check alone"], _ = timed(
        lambda: check_signature(Report(subject="x"), signed), args.repeat
    )
    print(
        f"\nrecord: {DROPS} drops, {SHEETS} sheets x {rig.ITEMS_PER_SHEET} items; canonical JSON "
        f"{len(record.canonical_json) / 1024:.0f} KiB; signed PDF {len(signed) / 1024:.0f} KiB, "
        f"{len(PdfReader(io.BytesIO(signed)).pages)} pages; plain-table PDF "
        f"{len(PdfReader(io.BytesIO(plain)).pages)} pages, {len(para) // 1024} KiB with Paragraphs"
    )
    print(f"median of {args.repeat} runs (sign_daily_record once)\n")
    print("| stage | seconds |\n|---|---|")
    for name, seconds in figures.items():
        print(f"| {name} | {seconds:.3f} |")
    base = figures["reportlab alone, same tables, text cells"]
    full = figures["render + sign (render_signed_pdf)"]
    drawn = figures["render only (record_pdf.render)"]
    para_s = figures["reportlab alone, same tables, Paragraph cells"]
    print(
        f"\nrender + sign / reportlab text tables = {full / base:.1f}x; "
        f"render only / reportlab text tables = {drawn / base:.1f}x; "
        f"render only / reportlab Paragraph tables = {drawn / para_s:.1f}x"
    )
    floor_sign = figures["sign-off floor: password check + one seal signature"]
    floor_verify = figures["verify floor: the PDF signature check alone"]
    print("\none line per figure, with its ratio to its floor:")
    print(
        f"x; sign-off {sign_s * 1000:.0f} ms; floor {floor_sign * 1000:.0f} ms;"
        f" ratio {sign_s / floor_sign:.1f}x (target 400 ms)"
    )
    for label, name in (
        (
            "verify db, the file the server made",
            "verify with the database, the file the server made (kept as checked)",
        ),
        (
            "verify db, a file never seen",
            "verify with the database, a file not seen before (pages drawn again)",
        ),
        ("verify offline", "verify offline (no database: pages drawn again)"),
    ):
        print(
            f"x; {label} {figures[name] * 1000:.0f} ms; floor {floor_verify * 1000:.0f} ms;"
            f" ratio {figures[name] / floor_verify:.1f}x"
        )
    print(
        f"x; render {drawn * 1000:.0f} ms; floor (reportlab, Paragraph tables)"
        f" {para_s * 1000:.0f} ms; ratio {drawn / para_s:.2f}x (target 1.5x)"
    )


if __name__ == "__main__":
    main()
