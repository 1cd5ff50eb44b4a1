"""Views, one module per resource (mirroring ``labdb.api.serializers``)."""
