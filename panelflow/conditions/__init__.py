"""Operating conditions: fluids, compressibility corrections and cavitation margins."""
