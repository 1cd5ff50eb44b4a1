"""The Celery application: broker from CELERY_BROKER_URL; without one, tasks run inline.

Start a worker with ``celery -A labdb.celery worker``. Settings come from Django's settings
under the ``CELERY_`` prefix (see labdb/settings.py).
"""

from __future__ import annotations

import os

from celery import Celery

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "labdb.settings")

app = Celery("labdb", include=["labdb.jobs.tasks"])
app.config_from_object("django.conf:settings", namespace="CELERY")
