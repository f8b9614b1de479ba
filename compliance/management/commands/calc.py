import json
from typing import Any

from django.core.management.base import BaseCommand, CommandError, CommandParser

from compliance.engineering import CALCULATIONS, CalcInputError, UnknownCalculation, run


class Command(BaseCommand):
    help = "Run one engineering calculation and print its result as JSON."

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("name", help=f"One of: {', '.join(sorted(CALCULATIONS))}.")
        parser.add_argument("--input", required=True, help="A JSON object of inputs.")

    def handle(self, *args: Any, **options: Any) -> None:
        try:
            inputs = json.loads(options["input"])
        except ValueError as exc:
            raise CommandError(f"input: not valid JSON ({exc}).") from exc
        except RecursionError:
            raise CommandError("input: JSON nested too deeply.") from None
        if not isinstance(inputs, dict):
            raise CommandError("input: must be a JSON object.")
        try:
            result = run(options["name"], inputs)
        except UnknownCalculation as exc:
            raise CommandError(str(exc)) from exc
        except CalcInputError as exc:
            raise CommandError(f"{exc.field}: {exc.message}") from exc
        self.stdout.write(json.dumps(result.to_dict(), sort_keys=True, allow_nan=False))
