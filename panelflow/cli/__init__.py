"""Command line: options in, one library call, writers out. Only this package prints."""

from panelflow.cli.main import build_parser, main

__all__ = ["build_parser", "main"]
