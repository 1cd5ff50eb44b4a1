"""Background jobs: one job's state and progress (its owner, or a curator)."""

from __future__ import annotations

from rest_framework import generics

from labdb.accounts.roles import CURATOR, has_role
from labdb.api.serializers.jobs import JobSerializer
from labdb.api.views.base import ApiViewMixin
from labdb.jobs.models import Job


class JobDetailView(ApiViewMixin, generics.RetrieveAPIView):
    serializer_class = JobSerializer

    def get_queryset(self):
        # Someone else's job answers 404, as on the job page: ids are not disclosed.
        qs = Job.objects.all()
        user = self.request.user
        return qs if has_role(user, CURATOR) else qs.filter(owner=user)
