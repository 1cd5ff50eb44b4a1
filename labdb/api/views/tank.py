"""Tank finder: the tank page's parameters in SI units; candidates with per-lot coverage."""

from __future__ import annotations

import math

from drf_spectacular.utils import extend_schema
from rest_framework.response import Response
from rest_framework.views import APIView

from labdb.api.serializers.common import json_safe
from labdb.api.serializers.tank import TankParams, TankResultSerializer
from labdb.api.views.base import ApiViewMixin
from labdb.api.views.search import refused
from labdb.physics import PhysicsInputError
from labdb.search.errors import SearchInputError
from labdb.search.queries import TankQuery
from labdb.search.services import find_tanks
from labdb.search.tank_q import lot_q_at


class TankView(ApiViewMixin, APIView):
    """Parts and lots that tune L ∥ C_fixed ∥ junction across a band with the bias available.

    Each lot reports its median unit's coverage, how many of its units cover, the worst
    unit, and Q at the band centre where impedance data exist; ``suggestion`` is a fixed
    capacitance [F] that centres the band (or null with the reason), ``refusal`` says why
    no lot covers.
    """

    @extend_schema(parameters=[TankParams], responses=TankResultSerializer)
    def get(self, request):
        params = TankParams(data=request.query_params)
        params.is_valid(raise_exception=True)
        try:
            result = find_tanks(TankQuery(**params.validated_data))
        except (SearchInputError, PhysicsInputError) as exc:
            raise refused(exc) from None
        lot_q = {}
        if result.candidates:
            centre = math.sqrt(result.query.f_low_hz * result.query.f_high_hz)
            lot_ids = [lot.lot_id for c in result.candidates for lot in c.lots]
            lot_q = lot_q_at(lot_ids, centre)
        body = TankResultSerializer(result, context={"request": request, "lot_q": lot_q}).data
        return Response(json_safe(body))
