"""WSGI entry point (gunicorn labdb.wsgi)."""

import os

from django.core.wsgi import get_wsgi_application

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "labdb.settings")
application = get_wsgi_application()
