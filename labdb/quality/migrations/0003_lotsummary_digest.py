"""Lot summaries keep a small digest beside their full figures (quality recomputation reads it)."""

from django.db import migrations, models


class Migration(migrations.Migration):
    dependencies = [
        ("quality", "0002_lotsummary_search_columns"),
    ]

    operations = [
        migrations.AddField(
            model_name="lotsummary",
            name="digest",
            field=models.JSONField(default=dict),
        ),
    ]
