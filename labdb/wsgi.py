"""WSGI entry point (gunicorn labdb.wsgi)."""

import os

from django.core.wsgi import get_wsgi_application

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "labdb.settings")
application = get_wsgi_application()

# After the application is loaded: full garbage collections then skip the start-up heap.
from labdb.runtime import freeze_startup_heap  # noqa: E402

freeze_startup_heap()
