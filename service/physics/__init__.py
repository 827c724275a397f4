"""Pure computation for the pellet effectiveness service.

Everything in this package takes SI floats or numpy arrays and returns numbers.
It imports numpy, scipy and the standard library only (a test enforces this).
"""
