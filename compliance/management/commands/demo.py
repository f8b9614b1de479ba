from typing import Any

from django.core.management import call_command
from django.core.management.base import BaseCommand, CommandParser

from compliance.demo import demo_logins, load_demo


class Command(BaseCommand):
    help = "Migrate, load the defaults and the invented demo scenario, then serve the demo."

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("--host", default="127.0.0.1")
        parser.add_argument("--port", default="8000")
        parser.add_argument("--no-serve", action="store_true", help="Load only; do not serve.")

    def handle(self, *args: Any, **options: Any) -> None:
        call_command("migrate", verbosity=0, interactive=False)
        call_command("collectstatic", verbosity=0, interactive=False)
        org = load_demo()
        url = f"http://{options['host']}:{options['port']}/"
        self.stdout.write(self.style.SUCCESS(f"Demo data loaded for {org.name}."))
        self.stdout.write(
            f"Open {url} (phone app), {url}admin/ (registers), {url}api/schema/ (API)."
        )
        self.stdout.write("Demo logins (invented people):")
        for username, password, role in demo_logins():
            self.stdout.write(f"  {username:<8} {password}  ({role})")
        self.stdout.write(
            "Caution: Parapet records and computes; it does not replace local regulations, the "
            "maker's manual or a licensed engineer's certification."
        )
        if not options["no_serve"]:
            call_command("runserver", f"{options['host']}:{options['port']}", use_reloader=False)
