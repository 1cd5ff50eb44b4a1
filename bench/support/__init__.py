"""Helpers shared by the benchmark scripts (not benchmarks themselves)."""
