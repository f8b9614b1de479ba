from typing import Any

from django.core.management.base import BaseCommand

from compliance.registers.profiles import load_default_checklists, load_profiles


class Command(BaseCommand):
    help = "Load the jurisdiction profiles and default checklists from fixtures/ (idempotent)."

    def handle(self, *args: Any, **options: Any) -> None:
        profiles = load_profiles()
        versions = load_default_checklists()
        self.stdout.write(f"{len(profiles)} profiles, {len(versions)} checklists current.")
