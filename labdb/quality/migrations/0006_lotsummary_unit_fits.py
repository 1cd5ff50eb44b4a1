"""Each summary keeps its units' most recent fits, for search's unit figures."""

import datetime as dt

from django.db import migrations, models


def fill_unit_fits(apps, schema_editor):
    # From the sweep entries every summary already holds; the rule of
    # labdb.quality.services.summaries._newest_fit, frozen here.
    LotSummary = apps.get_model("quality", "LotSummary")
    Sweep = apps.get_model("measurements", "Sweep")
    oldest = dt.datetime.min
    for summary in LotSummary.objects.only("pk", "figures").iterator(chunk_size=500):
        units = (summary.figures or {}).get("units", [])
        ids = [sw["sweep"] for u in units for sw in u.get("sweeps", [])]
        measured = dict(Sweep.objects.filter(pk__in=ids).values_list("pk", "measured_at"))
        fits = []
        for u in units:
            if not u.get("sweeps"):
                continue
            sw = max(
                u["sweeps"],
                key=lambda e: (
                    measured.get(e["sweep"]) is not None,
                    measured.get(e["sweep"]) or oldest,
                    e["sweep"],
                ),
            )
            fits.append([u["unit"], u["label"], sw["cjo"], sw["vj"], sw["m"], sw["cp"]])
        LotSummary.objects.filter(pk=summary.pk).update(unit_fits=fits)


class Migration(migrations.Migration):
    dependencies = [
        ("measurements", "0001_initial"),
        ("quality", "0005_lotsummary_newest_in_condition"),
    ]

    operations = [
        migrations.AddField(
            model_name="lotsummary",
            name="unit_fits",
            field=models.JSONField(default=list),
        ),
        migrations.RunPython(fill_unit_fits, migrations.RunPython.noop),
    ]
