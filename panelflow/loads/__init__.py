"""Loads: dimensional pressures and forces from a solved section, for structural models."""
