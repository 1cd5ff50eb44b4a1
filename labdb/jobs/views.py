"""Job pages: the user's background work, and one job with live progress."""

from __future__ import annotations

from django.http import Http404, JsonResponse
from django.shortcuts import get_object_or_404, render
from django.views.decorators.cache import never_cache

from labdb.accounts.roles import CURATOR, has_role
from labdb.jobs.models import Job
from labdb.jobs.services import job_status

PAGE = 100


def visible_jobs(user):
    """Top-level jobs the user may see: their own, or every job for a curator."""
    qs = Job.objects.filter(parent__isnull=True).select_related("owner")
    return qs if has_role(user, CURATOR) else qs.filter(owner=user)


def _job_for(request, pk: int) -> Job:
    job = get_object_or_404(Job.objects.select_related("owner"), pk=pk)
    if job.owner_id != request.user.pk and not has_role(request.user, CURATOR):
        raise Http404("no such job")  # 404, not 403: do not reveal others' jobs
    return job


def job_list(request):
    jobs = list(visible_jobs(request.user)[:PAGE])
    return render(
        request, "jobs/job_list.html", {"jobs": jobs, "all_users": has_role(request.user, CURATOR)}
    )


def job_detail(request, pk: int):
    job = _job_for(request, pk)
    return render(request, "jobs/job_detail.html", {"job": job, "status": job_status(job)})


@never_cache
def job_status_json(request, pk: int):
    return JsonResponse(job_status(_job_for(request, pk)))
