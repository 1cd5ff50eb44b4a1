"""Django settings for labdb: every setting comes from an environment variable.

Typed helpers read each variable and fail loudly with the variable's name when a value is
malformed. README.md lists every variable.
"""

from __future__ import annotations

import os
import secrets
from pathlib import Path

import dj_database_url
from django.core.exceptions import ImproperlyConfigured

BASE_DIR = Path(__file__).resolve().parent.parent
VAR_DIR = Path(os.environ.get("LABDB_VAR_DIR", BASE_DIR / "var"))


def env_str(name: str, default: str | None = None) -> str | None:
    value = os.environ.get(name)
    return default if value is None or value == "" else value


def env_bool(name: str, default: bool = False) -> bool:
    value = os.environ.get(name)
    if value is None or value == "":
        return default
    lowered = value.strip().lower()
    if lowered in {"1", "true", "yes", "on"}:
        return True
    if lowered in {"0", "false", "no", "off"}:
        return False
    raise ImproperlyConfigured(f"{name}={value!r}: use 1/0, true/false, yes/no or on/off")


def env_int(name: str, default: int) -> int:
    value = os.environ.get(name)
    if value is None or value == "":
        return default
    try:
        return int(value)
    except ValueError:
        raise ImproperlyConfigured(f"{name}={value!r} is not a whole number") from None


def env_float(name: str, default: float) -> float:
    value = os.environ.get(name)
    if value is None or value == "":
        return default
    try:
        return float(value)
    except ValueError:
        raise ImproperlyConfigured(f"{name}={value!r} is not a number") from None


def env_list(name: str, default: list[str]) -> list[str]:
    value = os.environ.get(name)
    if value is None or value.strip() == "":
        return default
    return [item.strip() for item in value.split(",") if item.strip()]


def _development_secret_key() -> str:
    """A per-checkout key kept under var/, so sessions survive a restart of `make run`."""
    path = VAR_DIR / "dev-secret-key"
    if not path.exists():
        VAR_DIR.mkdir(parents=True, exist_ok=True)
        path.write_text(secrets.token_urlsafe(50))
    return path.read_text().strip()


DEBUG = env_bool("DEBUG", False)
SECRET_KEY = env_str("SECRET_KEY")
if not SECRET_KEY:
    if not DEBUG:
        raise ImproperlyConfigured(
            "SECRET_KEY is not set. Set SECRET_KEY (a long random string) in the environment, "
            "or DEBUG=1 for a development key kept under var/."
        )
    SECRET_KEY = _development_secret_key()

ALLOWED_HOSTS = env_list("ALLOWED_HOSTS", ["127.0.0.1", "localhost"] if DEBUG else [])
CSRF_TRUSTED_ORIGINS = env_list("CSRF_TRUSTED_ORIGINS", [])

INSTALLED_APPS = [
    "django.contrib.admin",
    "django.contrib.auth",
    "django.contrib.contenttypes",
    "django.contrib.sessions",
    "django.contrib.messages",
    "django.contrib.staticfiles",
    "rest_framework",
    "django_filters",
    "drf_spectacular",
    "drf_spectacular_sidecar",
    "labdb.accounts",
    "labdb.catalog",
    "labdb.measurements",
    "labdb.quality",
    "labdb.web",
    "labdb.jobs",
    "labdb.api",
    "labdb.audit",
]

MIDDLEWARE = [
    "django.middleware.security.SecurityMiddleware",
    "whitenoise.middleware.WhiteNoiseMiddleware",
    "csp.middleware.CSPMiddleware",
    "django.contrib.sessions.middleware.SessionMiddleware",
    "django.middleware.common.CommonMiddleware",
    "django.middleware.csrf.CsrfViewMiddleware",
    "django.contrib.auth.middleware.AuthenticationMiddleware",
    "django.contrib.auth.middleware.LoginRequiredMiddleware",
    # After authentication: model signals read the acting user for the audit trail.
    "labdb.audit.context.AuditContextMiddleware",
    "django.contrib.messages.middleware.MessageMiddleware",
    "django.middleware.clickjacking.XFrameOptionsMiddleware",
]

ROOT_URLCONF = "labdb.urls"
WSGI_APPLICATION = "labdb.wsgi.application"

TEMPLATES = [
    {
        "BACKEND": "django.template.backends.django.DjangoTemplates",
        "DIRS": [],
        "APP_DIRS": True,
        "OPTIONS": {
            "context_processors": [
                "django.template.context_processors.request",
                "django.contrib.auth.context_processors.auth",
                "django.contrib.messages.context_processors.messages",
                "labdb.web.context.roles",
            ],
        },
    },
]

DATABASES = {
    "default": dj_database_url.parse(
        env_str("DATABASE_URL", f"sqlite:///{VAR_DIR / 'labdb.sqlite3'}"),
        conn_max_age=env_int("DB_CONN_MAX_AGE", 0),
    )
}
if DATABASES["default"]["ENGINE"] == "django.db.backends.sqlite3":
    # Several writers (web + command + inline jobs) on one file: wait for the lock rather
    # than fail, take the write lock when a transaction starts (no lock-upgrade deadlocks),
    # and use the write-ahead log so readers never block the writer. synchronous=NORMAL is
    # SQLite's documented safe setting under WAL (a power cut may lose the last commits,
    # never corrupt the file).
    DATABASES["default"].setdefault("OPTIONS", {}).update(
        {
            "timeout": 20,
            "transaction_mode": "IMMEDIATE",
            "init_command": "PRAGMA journal_mode=WAL; PRAGMA synchronous=NORMAL;",
        }
    )

DEFAULT_AUTO_FIELD = "django.db.models.BigAutoField"

AUTH_PASSWORD_VALIDATORS = [
    {"NAME": "django.contrib.auth.password_validation.UserAttributeSimilarityValidator"},
    {"NAME": "django.contrib.auth.password_validation.MinimumLengthValidator"},
    {"NAME": "django.contrib.auth.password_validation.CommonPasswordValidator"},
]
LOGIN_URL = "login"
LOGIN_REDIRECT_URL = "dashboard"
LOGOUT_REDIRECT_URL = "login"

LANGUAGE_CODE = "en"
TIME_ZONE = env_str("TIME_ZONE", "UTC")
USE_I18N = False
USE_TZ = True

STATIC_URL = "static/"
STATIC_ROOT = Path(env_str("STATIC_ROOT", str(VAR_DIR / "static")))
MEDIA_URL = "media/"
MEDIA_ROOT = Path(env_str("MEDIA_ROOT", str(VAR_DIR / "media")))

# Upload limits (bytes / counts); the archive limits guard against zip bombs.
UPLOAD_MAX_BYTES = env_int("UPLOAD_MAX_BYTES", 50 * 1024 * 1024)
DATA_UPLOAD_MAX_MEMORY_SIZE = UPLOAD_MAX_BYTES
FILE_UPLOAD_MAX_MEMORY_SIZE = 5 * 1024 * 1024
ARCHIVE_MAX_MEMBERS = env_int("ARCHIVE_MAX_MEMBERS", 20000)
ARCHIVE_MAX_TOTAL_BYTES = env_int("ARCHIVE_MAX_TOTAL_BYTES", 500 * 1024 * 1024)
ARCHIVE_MAX_RATIO = env_int("ARCHIVE_MAX_RATIO", 200)

# Quality rules: a unit fit with a larger RMS relative residual is flagged as poor; a lot
# whose Cpk against the part's spec is below QUALITY_MIN_CPK is flagged.
QUALITY_MAX_RMS_REL = env_float("QUALITY_MAX_RMS_REL", 0.02)
QUALITY_MIN_CPK = env_float("QUALITY_MIN_CPK", 1.33)

# REST API (labdb/api). Token auth first, so an anonymous request is answered 401, not 403.
REST_FRAMEWORK = {
    "DEFAULT_AUTHENTICATION_CLASSES": [
        "labdb.api.auth.ApiTokenAuthentication",
        "rest_framework.authentication.SessionAuthentication",
    ],
    "DEFAULT_PERMISSION_CLASSES": ["labdb.api.permissions.RolePermission"],
    "DEFAULT_THROTTLE_CLASSES": ["labdb.api.throttling.WriteRateThrottle"],
    "DEFAULT_THROTTLE_RATES": {
        "write": env_str("API_WRITE_RATE", "120/min"),
        "failed_auth": env_str("API_FAILED_AUTH_RATE", "30/min"),
    },
    # Proxies in front of the app: throttles then key on the client address from
    # X-Forwarded-For; 0 = use the socket's peer address and ignore the (spoofable) header.
    "NUM_PROXIES": env_int("API_NUM_PROXIES", 0),
    "DEFAULT_FILTER_BACKENDS": ["django_filters.rest_framework.DjangoFilterBackend"],
    "DEFAULT_PAGINATION_CLASS": "labdb.api.pagination.CatalogPagination",
    "DEFAULT_SCHEMA_CLASS": "drf_spectacular.openapi.AutoSchema",
    "EXCEPTION_HANDLER": "labdb.api.errors.api_exception_handler",
    "PAGE_SIZE": 50,
}
SPECTACULAR_SETTINGS = {
    "TITLE": "labdb API",
    "DESCRIPTION": "C–V sweeps, fitted junction models and SPICE cards. SI units in every "
    "number (F, V, Hz, H; °C for temperature); reverse bias is positive.",
    "VERSION": "1",
    "SERVE_INCLUDE_SCHEMA": False,
    "SCHEMA_PATH_PREFIX": "/api/v1",
    "COMPONENT_SPLIT_REQUEST": True,
    "ENUM_NAME_OVERRIDES": {
        "PartKindEnum": "labdb.catalog.models.PartKind",
        "FixtureKindEnum": "labdb.measurements.models.FixtureKind",
        "SweepKindEnum": "labdb.measurements.models.SweepKind",
    },
    "POSTPROCESSING_HOOKS": [
        "drf_spectacular.hooks.postprocess_schema_enums",
        "labdb.api.schema.add_error_responses",
    ],
    # The docs page takes its assets from drf-spectacular-sidecar: nothing from a CDN.
    "SWAGGER_UI_DIST": "SIDECAR",
    "SWAGGER_UI_FAVICON_HREF": "SIDECAR",
    "REDOC_DIST": "SIDECAR",
}

# Logs go to stdout; in production one JSON object per line (LOG_FORMAT=json).
LOG_FORMAT = env_str("LOG_FORMAT", "text" if DEBUG else "json")
if LOG_FORMAT not in {"json", "text"}:
    raise ImproperlyConfigured(f"LOG_FORMAT={LOG_FORMAT!r}: use json or text")
LOGGING = {
    "version": 1,
    "disable_existing_loggers": False,
    "formatters": {
        "json": {"()": "labdb.jobs.logfmt.JsonFormatter"},
        "text": {"format": "%(asctime)s %(levelname)s %(name)s: %(message)s"},
    },
    "handlers": {
        "console": {
            "class": "logging.StreamHandler",
            "stream": "ext://sys.stdout",
            "formatter": LOG_FORMAT,
        }
    },
    "root": {"handlers": ["console"], "level": env_str("LOG_LEVEL", "INFO")},
}

STATICFILES_FINDERS = [
    "django.contrib.staticfiles.finders.FileSystemFinder",
    "django.contrib.staticfiles.finders.AppDirectoriesFinder",
    "labdb.web.finders.PlotlyFinder",
]


# --- Production: TLS, cookies, HSTS, static and media storage, CSP (deploy/env.example) ---
SECURE_SSL_REDIRECT = env_bool("SECURE_SSL_REDIRECT", False)
SECURE_REDIRECT_EXEMPT = [r"^healthz$"]  # load balancers probe over plain HTTP
if env_bool("BEHIND_TLS_PROXY", False):
    # Only behind a proxy that sets this header itself (deploy/nginx.conf does).
    SECURE_PROXY_SSL_HEADER = ("HTTP_X_FORWARDED_PROTO", "https")
SESSION_COOKIE_SECURE = env_bool("SECURE_COOKIES", False)
CSRF_COOKIE_SECURE = SESSION_COOKIE_SECURE
SECURE_HSTS_SECONDS = env_int("SECURE_HSTS_SECONDS", 0)
SECURE_HSTS_INCLUDE_SUBDOMAINS = env_bool("SECURE_HSTS_INCLUDE_SUBDOMAINS", False)
SECURE_HSTS_PRELOAD = env_bool("SECURE_HSTS_PRELOAD", False)


def _media_storage() -> dict:
    """Raw files on the local disk (default) or in an S3-compatible bucket (MEDIA_STORAGE=s3)."""
    kind = env_str("MEDIA_STORAGE", "filesystem")
    if kind == "filesystem":
        return {"BACKEND": "django.core.files.storage.FileSystemStorage"}
    if kind != "s3":
        raise ImproperlyConfigured(f"MEDIA_STORAGE={kind!r}: use filesystem or s3")
    bucket = env_str("S3_BUCKET")
    if not bucket:
        raise ImproperlyConfigured("MEDIA_STORAGE=s3 needs S3_BUCKET (and S3_ENDPOINT_URL, keys)")
    return {
        "BACKEND": "storages.backends.s3.S3Storage",
        "OPTIONS": {
            "bucket_name": bucket,
            "endpoint_url": env_str("S3_ENDPOINT_URL"),
            "region_name": env_str("S3_REGION"),
            "access_key": env_str("S3_ACCESS_KEY_ID"),
            "secret_key": env_str("S3_SECRET_ACCESS_KEY"),
            "location": env_str("S3_PREFIX", ""),
            # Raw files are lab data: private objects, short-lived signed URLs, never overwritten.
            "default_acl": "private",
            "querystring_auth": True,
            "file_overwrite": False,
        },
    }


STORAGES = {
    "default": _media_storage(),
    # Hashed, pre-compressed static files served by whitenoise (run collectstatic first).
    "staticfiles": {"BACKEND": "whitenoise.storage.CompressedManifestStaticFilesStorage"},
}

# No inline scripts anywhere: pages load their JavaScript from /static/ only.
CONTENT_SECURITY_POLICY = {
    "DIRECTIVES": {
        "default-src": ["'self'"],
        "script-src": ["'self'"],
        # Plotly injects its own <style> rules and the forms carry style attributes; styles
        # cannot run code, so this is the one 'unsafe-inline' (never for scripts).
        "style-src": ["'self'", "'unsafe-inline'"],
        "img-src": ["'self'", "data:", "blob:"],
        "font-src": ["'self'"],
        "connect-src": ["'self'"],
        "object-src": ["'none'"],
        "base-uri": ["'self'"],
        "form-action": ["'self'"],
        "frame-ancestors": ["'none'"],
    }
}

# --- Background work: Celery on a broker; without CELERY_BROKER_URL jobs run inline ---
CELERY_BROKER_URL = env_str("CELERY_BROKER_URL", "")
CELERY_TASK_ALWAYS_EAGER = not CELERY_BROKER_URL
CELERY_TASK_ACKS_LATE = True  # a task is acknowledged only after it ran ...
CELERY_TASK_REJECT_ON_WORKER_LOST = True  # ... and redelivered if its worker dies
CELERY_WORKER_PREFETCH_MULTIPLIER = 1  # long tasks: take one at a time
CELERY_TASK_IGNORE_RESULT = True  # results live on the Job row
CELERY_TASK_DEFAULT_QUEUE = "labdb"
CELERY_WORKER_HIJACK_ROOT_LOGGER = False  # keep the logging configured above
CELERY_BROKER_CONNECTION_RETRY_ON_STARTUP = True
# Redis hands an unacknowledged task to another worker after this many seconds.
CELERY_BROKER_TRANSPORT_OPTIONS = {"visibility_timeout": env_int("CELERY_VISIBILITY_TIMEOUT", 3600)}
JOB_STALE_SECONDS = env_int("JOB_STALE_SECONDS", 120)  # a running job silent this long is resumed
JOB_REFIT_CHUNK = env_int("JOB_REFIT_CHUNK", 500)  # sweeps per refit job when workers share one
