"""OpenAPI details drf-spectacular cannot infer: token auth, and the error answers."""

from __future__ import annotations

from drf_spectacular.extensions import (
    OpenApiAuthenticationExtension,
    OpenApiSerializerFieldExtension,
)
from drf_spectacular.plumbing import ResolvedComponent

ERROR_SCHEMA = {
    "type": "object",
    "description": "Every 4xx answer: a list of located messages.",
    "properties": {
        "errors": {
            "type": "array",
            "items": {
                "type": "object",
                "properties": {
                    "field": {"type": "string", "description": "dotted path of the field"},
                    "file": {"type": "string"},
                    "line": {"type": "integer", "description": "1-based line of the file"},
                    "column": {"type": "string", "description": "column header in the file"},
                    "message": {"type": "string"},
                },
                "required": ["message"],
            },
        }
    },
    "required": ["errors"],
}

ERRORS = {
    "400": "Bad input; nothing was written",
    "401": "No credentials, or an unknown or revoked token",
    "403": "The role or the token scope does not allow this",
    "404": "No such object",
    "405": "Method not allowed here",
    "406": "Cannot answer in the requested media type",
    "409": "The data is not in a state to answer (e.g. no lot summary yet)",
    "413": "Upload larger than UPLOAD_MAX_BYTES",
    "415": "Unsupported request media type",
    "429": "Too many requests (writes, or failed authentications)",
}

#: Answers possible on every operation; the rest only where they can happen.
_ALWAYS = ("401", "403", "404", "405", "406", "429")
_WITH_BODY = ("400", "413", "415")


class ApiTokenScheme(OpenApiAuthenticationExtension):
    target_class = "labdb.api.auth.ApiTokenAuthentication"
    name = "tokenAuth"

    def get_security_definition(self, auto_schema):
        return {
            "type": "apiKey",
            "in": "header",
            "name": "Authorization",
            "description": "Personal token: `Authorization: Token <key>` (mint one at "
            "/account/tokens/ or with `manage.py mint_token`).",
        }


class NamedChoiceFieldExtension(OpenApiSerializerFieldExtension):
    """A ``NamedChoiceField`` refers to one enum component of its own name."""

    target_class = "labdb.api.serializers.common.NamedChoiceField"
    match_subclasses = True

    def map_serializer_field(self, auto_schema, direction):
        field = self.target
        component = ResolvedComponent(
            name=field.enum_name,
            type=ResolvedComponent.SCHEMA,
            object=field.enum_name,
            schema={"type": "string", "enum": [str(key) for key in field.choices]},
        )
        auto_schema.registry.register_on_missing(component)
        return component.ref


def add_error_responses(result, generator, request, public):
    """Postprocessing hook: document the error shape for every operation."""
    components = result.setdefault("components", {}).setdefault("schemas", {})
    components["Errors"] = ERROR_SCHEMA
    ref = {"$ref": "#/components/schemas/Errors"}
    for item in result.get("paths", {}).values():
        for method, operation in item.items():
            if not isinstance(operation, dict) or "responses" not in operation:
                continue
            codes = list(_ALWAYS) + ["400", "409"]
            if method in ("post", "put", "patch"):
                codes += list(_WITH_BODY)
            for code in codes:
                operation["responses"].setdefault(
                    code,
                    {"description": ERRORS[code], "content": {"application/json": {"schema": ref}}},
                )
    return result
