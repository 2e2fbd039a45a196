"""Exceptions raised for misuse; numerical failure is a status, never an exception."""
import math

__all__ = ["ModelError", "checked_number"]


class ModelError(ValueError):
    """A structure that cannot be analysed as given.

    The message names the offending node, member, DOF or value.
    """


def checked_number(owner: str, name: str, value, *, positive: bool) -> float:
    """``value`` as a float, or a :class:`ModelError` naming ``owner`` and ``name``.

    ``positive`` demands > 0, otherwise ≥ 0; non-finite values are always refused.
    """
    try:
        value = float(value)
    except (TypeError, ValueError):
        raise ModelError(f"{owner} `{name}` must be a number, got {value!r}.") from None
    if not math.isfinite(value) or value < 0.0 or (positive and value == 0.0):
        kind = "positive" if positive else "non-negative"
        raise ModelError(f"{owner} `{name}` must be a finite {kind} number, got {value!r}.")
    return value
