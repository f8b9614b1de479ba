import json
import sys
from pathlib import Path
from typing import Any

from django.core.management.base import BaseCommand, CommandError, CommandParser

from compliance.records.checks import TrustList, verify_export, verify_pdf


class Command(BaseCommand):
    help = (
        "Verify a signed daily-record PDF (signature, seal, stored record, chain) or an export "
        "ZIP (offline, from its signed manifest). VERIFIED needs a trust anchor: --trust FILE "
        "offline, or the organisation's registered certificates with the database. Exits 0 "
        "when verified, 1 when not, 2 when intact but no trust anchor vouches for the signer."
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
            help="Trust this PEM certificate (the signer's or its CA).",
        )
        parser.add_argument(
            "--trust",
            type=Path,
            action="append",
            default=[],
            help=(
                "A trust list: the organisation's certificate SHA-256 fingerprints, one a line,"
                " or PEM certificates (a CA bundle or the signers')."
            ),
        )
        parser.add_argument("--json", action="store_true", help="Print the full report as JSON.")

    def handle(self, *args: Any, **options: Any) -> None:
        try:
            data = options["file"].read_bytes()
        except OSError as exc:
            raise CommandError(f"Cannot read {options['file']}: {exc}") from exc
        trust = self._trust(options["trust"], options["cert"])
        if data[:2] == b"PK":
            report = verify_export(data, trust=trust, use_database=not options["offline"])
        else:
            report = verify_pdf(
                data,
                trust=trust,
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
            sys.exit(2 if report.intact else 1)

    def _trust(self, lists: list[Path], certs: list[Path]) -> TrustList | None:
        if not lists and not certs:
            return None
        prints: set[str] = set()
        roots: list[str] = []
        names = ", ".join(str(p) for p in [*lists, *certs])
        try:
            for path in lists:
                given = TrustList.from_text(path.read_text(), names)
                prints |= given.fingerprints
                roots += given.roots
            if certs:
                given = TrustList.from_pems([p.read_text() for p in certs], names)
                prints |= given.fingerprints
                roots += given.roots
        except (OSError, ValueError) as exc:
            raise CommandError(f"Cannot read the trust list: {exc}") from exc
        return TrustList(fingerprints=frozenset(prints), roots=tuple(roots), source=names)
