"""Upload page: preview parsed points and the fit, then store; or store at once."""

from __future__ import annotations

import secrets
import shutil
from pathlib import Path

import numpy as np
from django.conf import settings
from django.contrib import messages
from django.db import transaction
from django.shortcuts import redirect, render

from labdb.accounts.decorators import role_required
from labdb.accounts.roles import MEMBER
from labdb.catalog.models import Part
from labdb.jobs.services import broker_configured, submit_archive_import
from labdb.measurements.services import SweepContext, preview_file, record_file
from labdb.web import charts
from labdb.web.forms import UploadForm

STAGING = "staging"


def _staging_dir(token: str) -> Path:
    return Path(settings.MEDIA_ROOT) / STAGING / token


def _stage(request, files) -> str:
    token = secrets.token_hex(16)
    folder = _staging_dir(token)
    folder.mkdir(parents=True)
    for i, f in enumerate(files):
        name = Path(f.name).name or f"file{i}"
        with open(folder / f"{i:04d}__{name}", "wb") as out:
            for chunk in f.chunks():
                out.write(chunk)
    request.session.setdefault("staged", []).append(token)
    request.session.modified = True
    return token


def _staged_files(request, token: str) -> list[tuple[str, bytes]]:
    if token not in request.session.get("staged", []) or not token.isalnum():
        return []
    folder = _staging_dir(token)
    if not folder.is_dir():
        return []
    return [(p.name.split("__", 1)[1], p.read_bytes()) for p in sorted(folder.iterdir())]


def _drop_stage(request, token: str) -> None:
    shutil.rmtree(_staging_dir(token), ignore_errors=True)
    staged = request.session.get("staged", [])
    if token in staged:
        staged.remove(token)
        request.session.modified = True


def _context(data: dict) -> SweepContext:
    part = data.get("part")
    part_number = part.part_number if part else (data.get("new_part_number") or None)
    fixture = data.get("fixture")
    return SweepContext(
        part=part_number,
        lot=data.get("lot") or None,
        unit=data.get("unit") or None,
        fixture=fixture.name if fixture else None,
        kind=data.get("kind") or None,
        temperature_c=data.get("temperature_c"),
        illumination=data.get("illumination") or None,
        measured_at=data.get("measured_at"),
        operator=data.get("operator") or None,
        model=data.get("model") or "auto",
        bias_v=data.get("bias_v"),
    )


def _preview_rows(name: str, data: bytes, ctx: SweepContext) -> list[dict]:
    rows = []
    if name.lower().endswith(".zip"):
        return [
            {
                "source": name,
                "status": "archive",
                "notes": ["archive: members are checked when stored"],
            }
        ]
    for i, outcome in enumerate(preview_file(data, name, ctx)):
        row = {
            "source": outcome.source,
            "status": outcome.status,
            "notes": outcome.notes,
            "problems": [str(p) for p in outcome.problems],
        }
        if outcome.fit_result is not None:
            bias = np.asarray(outcome.parsed.bias_v)
            grid = charts.smooth_grid(float(bias.min()), float(bias.max()))
            row["fit"] = outcome.fit_result
            row["chart"] = charts.cv_with_fit(
                bias,
                outcome.capacitance_f,
                grid,
                outcome.fit_result.evaluate(grid),
                title=f"Preview: {outcome.source}",
            )
            row["chart_id"] = f"preview-{len(rows)}-{i}"
            row["n_points"] = len(bias)
        rows.append(row)
    return rows


def _ensure_new_part(data: dict, user) -> None:
    number = data.get("new_part_number")
    if number and not Part.objects.filter(part_number=number).exists():
        Part.objects.create(
            part_number=number,
            kind=data.get("new_part_kind") or "other",
            rated_reverse_v=data.get("new_part_rated_reverse_v"),
            created_by=user,
        )


@role_required(MEMBER)
def upload(request):
    form = UploadForm(request.POST or None, request.FILES or None)
    if request.method != "POST" or not form.is_valid():
        return render(request, "web/upload.html", {"form": form})
    data = form.cleaned_data
    ctx = _context(data)
    token = data.get("staged") or ""
    files = [(Path(f.name).name, f.read()) for f in data["files"]] if data["files"] else []
    if not files and token:
        files = _staged_files(request, token)
    if not files:
        form.add_error("files", "choose at least one file")
        return render(request, "web/upload.html", {"form": form})
    too_big = [n for n, b in files if len(b) > settings.UPLOAD_MAX_BYTES]
    if too_big:
        form.add_error(
            "files",
            f"over the {settings.UPLOAD_MAX_BYTES // 1_000_000} MB limit: {', '.join(too_big)}",
        )
        return render(request, "web/upload.html", {"form": form}, status=413)

    if "preview" in request.POST:
        token = _stage(request, data["files"]) if data["files"] else token
        rows = [r for name, blob in files for r in _preview_rows(name, blob, ctx)]
        for n, row in enumerate(rows):  # ids unique across files: each chart its own data
            row["chart_id"] = f"preview-{n}"
        bound = form.data.copy()
        bound["staged"] = token
        return render(
            request,
            "web/upload.html",
            {"form": UploadForm(bound), "preview": rows, "staged": token},
        )

    outcomes, jobs = [], []
    with transaction.atomic():
        _ensure_new_part(data, request.user)
        for name, blob in files:
            if broker_configured() and name.lower().endswith(".zip"):
                # With workers, an archive imports in the background; its job page shows progress.
                jobs.append(submit_archive_import(blob, name, ctx, user=request.user))
            else:
                outcomes += record_file(blob, name, ctx, user=request.user, origin="upload")
        if not jobs and not any(o.status == "stored" for o in outcomes):
            transaction.set_rollback(True)
    if token:
        _drop_stage(request, token)
    if jobs and not outcomes:
        return redirect(jobs[0] if len(jobs) == 1 else "job-list")
    for job in jobs:
        messages.info(request, f"{job.filename} is importing in the background: job #{job.pk}")
    counts = {s: sum(o.status == s for o in outcomes) for s in ("stored", "duplicate", "rejected")}
    status = (
        200
        if counts["rejected"] == 0
        else 400
        if counts["stored"] == 0 and counts["duplicate"] == 0
        else 200
    )
    return render(
        request, "web/upload_result.html", {"outcomes": outcomes, "counts": counts}, status=status
    )
