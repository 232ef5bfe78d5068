"""The wiring check: every signal a block reads is provided by a role before it.

Run before the first step, so a mis-wired stack is an error naming the
block and the missing signal, not a crash at t = 37 s.
"""

from __future__ import annotations

from typing import Any

from ..core.errors import ParameterError
from .signals import GuideOutput, NavState, signal_names

__all__ = ["check_wiring"]


def _needs(block: Any, role: str) -> frozenset[str]:
    for method in ("init", "step"):
        if not callable(getattr(block, method, None)):
            raise ParameterError(f"stack.{role}", type(block).__name__, f"must have an '{method}' method")
    needs = getattr(block, "needs", None)
    if not isinstance(needs, (set, frozenset)) or not all(isinstance(s, str) for s in needs):
        raise ParameterError(f"stack.{role}", type(block).__name__, "must declare 'needs', a set of signal names")
    return frozenset(needs)


def check_wiring(guide: Any, pilot: Any) -> None:
    """Check that the navigator provides what the guide reads, and navigator + guide what the pilot reads.

    Raises
    ------
    ParameterError
        Naming the role, the block and the signals it reads that nothing provides.

    Examples
    --------
    >>> class Blind:
    ...     needs = frozenset({"sonar_range_m"})
    ...     def init(self, nav): ...
    ...     def step(self, state, nav, dt_s): ...
    >>> check_wiring(Blind(), None)
    Traceback (most recent call last):
    ...
    wavebench.core.errors.ParameterError: stack.guide = 'Blind' is not allowed: reads ['sonar_range_m'], ...
    """
    nav = signal_names(NavState)
    for role, block, provided in (
        ("guide", guide, nav),
        ("pilot", pilot, nav | signal_names(GuideOutput)),
    ):
        missing = sorted(_needs(block, role) - provided)
        if missing:
            raise ParameterError(
                f"stack.{role}", type(block).__name__,
                f"reads {missing}, which no role before it provides (available: {sorted(provided)})",
            )  # fmt: skip
