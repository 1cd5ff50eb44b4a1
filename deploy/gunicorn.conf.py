"""gunicorn settings for labdb's web process (``gunicorn -c deploy/gunicorn.conf.py``)."""

import os

wsgi_app = "labdb.wsgi:application"
bind = os.environ.get("GUNICORN_BIND", "127.0.0.1:8000")
# Uploads and previews fit curves in the request: CPU-bound, so about one worker per core
# (plus one); the heavy archive imports and refits run on Celery workers instead.
workers = int(os.environ.get("GUNICORN_WORKERS", str((os.cpu_count() or 1) + 1)))
worker_class = "sync"
timeout = int(os.environ.get("GUNICORN_TIMEOUT", "120"))
graceful_timeout = 30
keepalive = 5
# Recycle workers now and then so a slow leak never grows without bound.
max_requests = 2000
max_requests_jitter = 200
# Logs to stdout/stderr; the app's own logs are JSON lines (LOG_FORMAT=json).
accesslog = "-"
errorlog = "-"
forwarded_allow_ips = os.environ.get("GUNICORN_FORWARDED_ALLOW_IPS", "127.0.0.1")
