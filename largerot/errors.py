"""Exceptions raised for misuse; numerical failure is a status, never an exception."""

__all__ = ["ModelError"]


class ModelError(ValueError):
    """A structure that cannot be analysed as given.

    The message names the offending node, member, DOF or value.
    """
