"""The one error type raised for bad parameters and bad input data."""

from __future__ import annotations

from typing import Any

import numpy as np

__all__ = ["ParameterError", "WavebenchWarning", "describe_value"]


def describe_value(value: Any) -> str:
    """Short, readable rendering of a received value for an error message.

    Parameters
    ----------
    value : object
        Whatever the user passed.

    Returns
    -------
    str
        ``repr`` for scalars; for arrays, the shape and the first offending
        kind of entry (NaN, inf, min/max) so that a message stays one line.
    """
    if isinstance(value, np.ndarray) and value.ndim > 0:
        if value.size == 0:
            return f"empty array of shape {value.shape}"
        if np.issubdtype(value.dtype, np.number):
            finite = np.isfinite(value)
            if not finite.all():
                bad = value[~finite].flat[0].item()
                return f"array of shape {value.shape} containing {bad!r}"
            return f"array of shape {value.shape} with min {value.min().item()!r} and max {value.max().item()!r}"
        return f"array of shape {value.shape} and dtype {value.dtype}"
    if isinstance(value, np.generic):
        value = value.item()
    return repr(value)


class ParameterError(ValueError):
    """A parameter or input value is not allowed.

    The message always names the field (with its dotted path where known),
    the value received and what is allowed, e.g.::

        sea.hs_m = -1.0 is not allowed: must be a finite number > 0

    Parameters
    ----------
    field : str
        Name (or dotted path) of the offending field.
    value : object
        The value received.
    allowed : str
        Human-readable statement of what is allowed.
    hint : str, optional
        Extra advice, e.g. the nearest valid key for a typo.
    """

    def __init__(self, field: str, value: Any, allowed: str, hint: str = "") -> None:
        self.field = field
        self.value = value
        self.allowed = allowed
        self.hint = hint
        message = f"{field} = {describe_value(value)} is not allowed: {allowed}"
        if hint:
            message += f" ({hint})"
        super().__init__(message)

    def with_prefix(self, prefix: str) -> ParameterError:
        """Return the same error with ``prefix.`` put before the field name."""
        return ParameterError(f"{prefix}.{self.field}", self.value, self.allowed, self.hint)


class WavebenchWarning(UserWarning):
    """Warning for inputs that are allowed but outside a method's validity range."""
