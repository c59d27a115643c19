"""Practice statistics over logged attempts: the columnar frame, rates, streaks, trends, bias.

Attempts are taken in time order (``when``, then ``id``); days and ISO weeks are counted in the
player's local time zone (a ``tz`` argument, default the machine's local zone).
"""
