"""labdb: a shared lab database of PN-junction C–V sweeps and fitted junction models."""
