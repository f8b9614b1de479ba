"""Site access is called a grant everywhere: the models follow the routes, services and screens."""

from django.conf import settings
from django.db import migrations


class Migration(migrations.Migration):
    dependencies = [
        ("compliance", "0010_due_dates"),
        migrations.swappable_dependency(settings.AUTH_USER_MODEL),
    ]

    operations = [
        migrations.RenameModel("SiteAccess", "SiteGrant"),
        migrations.RenameModel("SiteAccessEnd", "SiteGrantEnd"),
    ]
