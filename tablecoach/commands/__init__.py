"""Subcommands of the tablecoach command line, one module each."""
