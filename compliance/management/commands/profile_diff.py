import json
from typing import Any

from django.core.management.base import BaseCommand, CommandError, CommandParser

from compliance.models import ProfileRevision
from compliance.registers.profiles import profile_diff


class Command(BaseCommand):
    help = (
        "Show what changed between two revisions of a jurisdiction profile (by default the last"
        " two): thresholds added, removed and changed, with their sources."
    )

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("profile", help="The profile's key, e.g. generic.")
        parser.add_argument("--from", dest="start", type=int, help="Revision number before.")
        parser.add_argument("--to", dest="end", type=int, help="Revision number after.")

    def handle(self, *args: Any, **options: Any) -> None:
        revisions = list(
            ProfileRevision.objects.filter(profile__key=options["profile"]).select_related(
                "profile"
            )
        )
        if not revisions:
            raise CommandError(f"No profile {options['profile']!r} has been loaded.")
        by_number = {r.number: r for r in revisions}
        end = by_number.get(options["end"] or revisions[-1].number)
        start_number = options["start"] or (end.number - 1 if end else 0)
        start = by_number.get(start_number)
        if start is None or end is None:
            known = ", ".join(str(n) for n in by_number)
            raise CommandError(f"Name two of the revisions {known}; a first revision has no diff.")
        self.stdout.write(json.dumps(profile_diff(start, end), indent=2, ensure_ascii=False))
