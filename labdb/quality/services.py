"""Lot summaries and flags (filled in by the lots-over-time work)."""
