"""REST API for bench scripts and design tools: tokens, serializers, views, SPICE cards."""
