"""Background jobs: archive imports, refits and lot recomputation, run by Celery or inline."""
