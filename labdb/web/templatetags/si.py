"""Template filters that show SI values in bench units (pF, MHz, µH)."""

from django import template

register = template.Library()


def _scaled(value, factor, digits):
    if value is None or value == "":
        return "—"
    try:
        return f"{float(value) * factor:.{digits}g}"
    except (TypeError, ValueError):
        return "—"


@register.filter
def pf(value, digits=4):
    """Farads shown in pF."""
    return _scaled(value, 1e12, int(digits))


@register.filter
def mhz(value, digits=6):
    """Hertz shown in MHz."""
    return _scaled(value, 1e-6, int(digits))


@register.filter
def uh(value, digits=4):
    """Henries shown in µH."""
    return _scaled(value, 1e6, int(digits))


@register.filter
def sig(value, digits=4):
    """A plain number to ``digits`` significant figures."""
    return _scaled(value, 1.0, int(digits))


@register.filter
def get_item(mapping, key):
    """``mapping[key]`` in a template, or None."""
    return mapping.get(key) if hasattr(mapping, "get") else None
