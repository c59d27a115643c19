"""tablecoach: a keyboard-driven practice coach for bank and kick shots in pool."""

__version__ = "0.1.0"
