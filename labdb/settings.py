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
    "labdb.accounts",
    "labdb.catalog",
    "labdb.measurements",
    "labdb.quality",
    "labdb.web",
]

MIDDLEWARE = [
    "django.middleware.security.SecurityMiddleware",
    "django.contrib.sessions.middleware.SessionMiddleware",
    "django.middleware.common.CommonMiddleware",
    "django.middleware.csrf.CsrfViewMiddleware",
    "django.contrib.auth.middleware.AuthenticationMiddleware",
    "django.contrib.auth.middleware.LoginRequiredMiddleware",
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
    # Several writers (web + command) on one file: wait for the lock instead of failing.
    DATABASES["default"].setdefault("OPTIONS", {})["timeout"] = 20

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

REST_FRAMEWORK = {
    "DEFAULT_AUTHENTICATION_CLASSES": [
        "rest_framework.authentication.SessionAuthentication",
    ],
    "DEFAULT_PERMISSION_CLASSES": ["rest_framework.permissions.IsAuthenticated"],
}

LOGGING = {
    "version": 1,
    "disable_existing_loggers": False,
    "handlers": {"console": {"class": "logging.StreamHandler"}},
    "root": {"handlers": ["console"], "level": env_str("LOG_LEVEL", "INFO")},
}

STATICFILES_FINDERS = [
    "django.contrib.staticfiles.finders.FileSystemFinder",
    "django.contrib.staticfiles.finders.AppDirectoriesFinder",
    "labdb.web.finders.PlotlyFinder",
]
