"""Serializers, one module per resource (mirrored by ``labdb.api.views``)."""
