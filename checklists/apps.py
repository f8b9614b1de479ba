from django.apps import AppConfig


class ChecklistsConfig(AppConfig):
    name = "checklists"
    verbose_name = "Checklists and check sheets"
