"""Job services: submit background work, and run a claimed job by calling domain services.

Pages, the API, the hooks and the Celery task all go through these functions.
"""

from labdb.jobs.services.runner import BUSY, execute, job_status, stale_job_ids
from labdb.jobs.services.submit import (
    broker_configured,
    submit_archive_import,
    submit_lot_recompute,
    submit_refit,
)

__all__ = [
    "BUSY",
    "broker_configured",
    "execute",
    "job_status",
    "stale_job_ids",
    "submit_archive_import",
    "submit_lot_recompute",
    "submit_refit",
]
