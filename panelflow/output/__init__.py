"""Output: result files (JSON, CSV, mesh formats), text reports and figures."""

# registers the polar CSV writer with the result writers (see tables.write_polar_csv)
from panelflow.output import tables as _tables  # noqa: F401
