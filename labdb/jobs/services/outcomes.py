"""Turn service results (import outcomes, refit summaries) into a job's JSON result."""

from __future__ import annotations

MAX_FILES = 5000  # per-file rows kept on the job; counts always cover every file
MAX_ERRORS = 200


def summarize_import(outcomes, *, attempt: int) -> dict:
    """Counts by status, one row per file (sweep id or problems), and the first errors."""
    counts = {"stored": 0, "duplicate": 0, "rejected": 0}
    files, errors = [], []
    for o in outcomes:
        counts[o.status] = counts.get(o.status, 0) + 1
        problems = [str(p) for p in o.problems][:5]
        if len(files) < MAX_FILES:
            files.append(
                {
                    "source": o.source,
                    "status": o.status,
                    "sweep": o.sweep.pk if o.sweep is not None else None,
                    "problems": problems,
                }
            )
        if o.status == "rejected" and len(errors) < MAX_ERRORS:
            errors += [f"{o.source}: {p}" for p in problems]
    result = {**counts, "files": files, "errors": errors[:MAX_ERRORS], "attempt": attempt}
    if len(outcomes) > MAX_FILES:
        result["files_truncated"] = len(outcomes) - MAX_FILES
    if attempt > 1:
        result["note"] = (
            "this import was resumed after a worker was lost; files stored by the earlier "
            "attempt show as duplicates"
        )
    return result


def summarize_refit(summary, *, attempt: int) -> dict:
    """A RefitSummary as JSON: counts and the first failures with their reasons."""
    return {
        "examined": summary.examined,
        "new_versions": summary.new_versions,
        "unchanged": summary.unchanged,
        "failed": len(summary.failed),
        "errors": [f"sweep {pk}: {why}" for pk, why in summary.failed[:MAX_ERRORS]],
        "attempt": attempt,
    }
