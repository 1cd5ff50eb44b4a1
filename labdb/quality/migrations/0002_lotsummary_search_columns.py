"""Lot summaries carry their lot's part and receipt date, so search need not join the lots."""

import django.db.models.deletion
from django.db import migrations, models


def copy_from_lots(apps, schema_editor):
    LotSummary = apps.get_model("quality", "LotSummary")
    Lot = apps.get_model("catalog", "Lot")
    lots = Lot.objects.filter(pk=models.OuterRef("lot_id"))
    LotSummary.objects.update(
        part_id=models.Subquery(lots.values("part_id")[:1]),
        received_on=models.Subquery(lots.values("received_on")[:1]),
    )


class Migration(migrations.Migration):
    dependencies = [
        ("catalog", "0001_initial"),
        ("quality", "0001_initial"),
    ]

    operations = [
        migrations.AddField(
            model_name="lotsummary",
            name="part",
            field=models.ForeignKey(
                db_index=False,
                help_text="The lot's part (copy of lot.part, for search).",
                null=True,
                on_delete=django.db.models.deletion.CASCADE,
                related_name="+",
                to="catalog.part",
            ),
        ),
        migrations.AddField(
            model_name="lotsummary",
            name="received_on",
            field=models.DateField(
                blank=True, help_text="The lot's receipt date (copy, for search).", null=True
            ),
        ),
        migrations.RunPython(copy_from_lots, migrations.RunPython.noop),
        migrations.AddIndex(
            model_name="lotsummary",
            index=models.Index(
                fields=["part", "illumination", "temperature_c", "received_on"],
                name="summary_search_part_idx",
            ),
        ),
    ]
