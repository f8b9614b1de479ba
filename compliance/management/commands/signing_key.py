from pathlib import Path
from typing import Any

from django.core.management.base import BaseCommand, CommandError, CommandParser

from compliance.models import Organisation
from compliance.records.signing import create_self_signed, store_credential


class Command(BaseCommand):
    help = (
        "Give an organisation its document-signing certificate: a self-signed one for the demo "
        "(--self-signed) or one issued by its CA (--cert and --key PEM files)."
    )

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("organisation", help="The organisation's name.")
        parser.add_argument("--self-signed", action="store_true")
        parser.add_argument("--cert", type=Path)
        parser.add_argument("--key", type=Path)
        parser.add_argument("--key-passphrase", default=None)

    def handle(self, *args: Any, **options: Any) -> None:
        org = Organisation.objects.filter(name=options["organisation"]).first()
        if org is None:
            raise CommandError(f"No organisation named {options['organisation']!r}.")
        if options["self_signed"]:
            credential = create_self_signed(organisation=org)
        elif options["cert"] and options["key"]:
            passphrase = options["key_passphrase"]
            try:
                credential = store_credential(
                    organisation=org,
                    certificate_pem=options["cert"].read_bytes(),
                    key_pem=options["key"].read_bytes(),
                    key_passphrase=passphrase.encode() if passphrase else None,
                )
            except (OSError, ValueError) as exc:
                raise CommandError(f"Cannot import the certificate: {exc}") from exc
        else:
            raise CommandError("Give --self-signed, or --cert and --key.")
        self.stdout.write(f"{credential.subject}: SHA-256 {credential.fingerprint_sha256}")
