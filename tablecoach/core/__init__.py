"""The pure domain of tablecoach: numpy and the standard library only, SI units."""
