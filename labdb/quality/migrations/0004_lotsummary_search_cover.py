"""A covering index for search's ranking pass over lot summaries."""

from django.db import migrations, models


class Migration(migrations.Migration):
    dependencies = [
        ("quality", "0003_lotsummary_digest"),
    ]

    operations = [
        migrations.AddIndex(
            model_name="lotsummary",
            index=models.Index(
                fields=[
                    "illumination",
                    "temperature_c",
                    "part",
                    "received_on",
                    "lot",
                    "n_units",
                    "bias_min_v",
                    "bias_max_v",
                    "cjo_med",
                    "vj_med",
                    "m_med",
                    "cp_med",
                ],
                name="summary_search_cover_idx",
            ),
        ),
    ]
