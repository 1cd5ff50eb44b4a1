"""Exceptions raised by the numerical core."""


class PhysicsInputError(ValueError):
    """Input that no honest computation can use (too few points, NaN, negative C, ...).

    The message names the bad argument and says what would be acceptable.
    """
