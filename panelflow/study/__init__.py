"""Studies: TOML case files and the runner that solves many sections on any executor."""
