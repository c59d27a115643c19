"""Widgets and helpers of the practice app."""
