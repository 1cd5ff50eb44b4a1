"""Audit trail: who created, changed, archived, reviewed or deleted which record, and when."""
