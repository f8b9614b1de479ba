from django.apps import AppConfig


class ComplianceConfig(AppConfig):
    name = "compliance"
    verbose_name = "Parapet compliance"

    def ready(self) -> None:
        # Imported here: the models and the token module need the app registry ready.
        from django.db.models.signals import post_save  # beside them, for one reading

        from compliance.api.tokens import revoke_on_password_change
        from compliance.models import User

        post_save.connect(revoke_on_password_change, sender=User, dispatch_uid="revoke-tokens")

        # The tasks register themselves on the project's Celery app when their module is
        # imported. Services queue them by name (they sit below the task layer and do not
        # import it), so the module is loaded here, before any request can sign a record.
        import compliance.tasks  # noqa: F401
