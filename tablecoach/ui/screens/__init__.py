"""Screens of the practice app: practice, setup, help, summary (and history, when installed)."""
