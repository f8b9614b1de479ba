import json
import sys
from pathlib import Path
from typing import Any

from django.core.management.base import BaseCommand, CommandError, CommandParser

from compliance.verification import verify_export, verify_pdf


class Command(BaseCommand):
    help = (
        "Verify a signed daily-record PDF (signature, seal, stored record, chain) or an export "
        "ZIP (offline, from its manifest). Exits 0 when verified, 1 when not."
    )

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("file", type=Path)
        parser.add_argument(
            "--offline",
            action="store_true",
            help="PDF only: skip the database (signature and seal only).",
        )
        parser.add_argument(
            "--cert",
            type=Path,
            action="append",
            default=[],
            help="Trust this PEM certificate (with --offline).",
        )
        parser.add_argument("--json", action="store_true", help="Print the full report as JSON.")

    def handle(self, *args: Any, **options: Any) -> None:
        try:
            data = options["file"].read_bytes()
        except OSError as exc:
            raise CommandError(f"Cannot read {options['file']}: {exc}") from exc
        if data[:2] == b"PK":
            report = verify_export(data)
        else:
            trusted = [p.read_text() for p in options["cert"]] or None
            report = verify_pdf(
                data,
                trusted_pems=trusted,
                use_database=not options["offline"],
                name=options["file"].name,
            )
        if options["json"]:
            self.stdout.write(json.dumps(report.as_dict(), indent=2))
        else:
            for check in report.checks:
                self.stdout.write(f"  [{'ok' if check.ok else 'FAIL'}] {check.detail}")
            self.stdout.write(report.verdict())
        if not report.ok:
            sys.exit(1)
