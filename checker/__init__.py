"""motorcheck: recalculates every row of a submitted motor schedule against the code's motor rules."""

__version__ = "0.1.0"
