"""The Celery application: broker from CELERY_BROKER_URL; without one, tasks run inline.

Start a worker with ``celery -A labdb.celery worker``. Settings come from Django's settings
under the ``CELERY_`` prefix (see labdb/settings.py).
"""

from __future__ import annotations

import os

from celery import Celery
from celery.signals import worker_process_init

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "labdb.settings")

app = Celery("labdb", include=["labdb.jobs.tasks"])
app.config_from_object("django.conf:settings", namespace="CELERY")


@worker_process_init.connect
def _freeze_startup_heap(**kwargs) -> None:
    # As the web process does (labdb/runtime.py): a lot recomputation in a job then pays no
    # full collections over the worker's start-up heap.
    from labdb.runtime import freeze_startup_heap

    freeze_startup_heap()
