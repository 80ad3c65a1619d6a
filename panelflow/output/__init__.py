"""Output: result files (JSON, CSV, mesh formats), text reports and figures."""
