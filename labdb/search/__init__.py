"""Choosing a part: search by fitted swing, and a tank finder that honours lot spread.

Filtering and ranking run in the database over lot summaries; only the shortlisted lots are
refined in Python with their unit fits. Entry points live in :mod:`labdb.search.services`.
"""
