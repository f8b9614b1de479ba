import json
from pathlib import Path
from typing import Any

from django.core.exceptions import ValidationError
from django.core.management.base import BaseCommand, CommandError, CommandParser

from checklists.services import ensure_published
from compliance.models import Organisation


class Command(BaseCommand):
    help = "Publish a checklist definition (JSON file) as a new version if its items changed."

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("file", type=Path)
        parser.add_argument(
            "--organisation", help="Organisation name for an organisation's own checklist."
        )

    def handle(self, *args: Any, **options: Any) -> None:
        try:
            data = json.loads(options["file"].read_text(encoding="utf-8"))
        except (OSError, ValueError) as exc:
            raise CommandError(f"Cannot read {options['file']}: {exc}") from exc
        org = None
        if options["organisation"]:
            org = Organisation.objects.filter(name=options["organisation"]).first()
            if org is None:
                raise CommandError(f"No organisation named {options['organisation']!r}.")
        try:
            version = ensure_published(
                key=data["key"],
                title=data["title"],
                applies_to=data["applies_to"],
                description=data.get("description", ""),
                items=data["items"],
                organisation=org,
            )
        except KeyError as exc:
            raise CommandError(f"The file has no {exc.args[0]!r}.") from exc
        except ValidationError as exc:
            raise CommandError(f"Invalid checklist: {exc.message_dict}") from exc
        self.stdout.write(f"{version} published, content hash {version.content_hash}")
