"""One JSON object per log line on stdout, for log collectors (``LOG_FORMAT=json``)."""

from __future__ import annotations

import json
import logging
from datetime import UTC, datetime

# Attributes every LogRecord has; anything else was passed in ``extra=`` and is kept.
_STANDARD = set(vars(logging.makeLogRecord({}))) | {"message", "asctime", "taskName"}


class JsonFormatter(logging.Formatter):
    """Format a record as one JSON line: time, level, logger, message and extra fields."""

    def format(self, record: logging.LogRecord) -> str:
        out = {
            "ts": datetime.fromtimestamp(record.created, UTC).isoformat(timespec="milliseconds"),
            "level": record.levelname,
            "logger": record.name,
            "message": record.getMessage(),
        }
        for key, value in vars(record).items():
            if key not in _STANDARD and not key.startswith("_"):
                out[key] = value
        if record.exc_info:
            out["exc"] = self.formatException(record.exc_info)
        return json.dumps(out, default=str, ensure_ascii=False)
