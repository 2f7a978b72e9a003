"""Copying slips, made on purpose: what ``data check`` must catch, for its benchmark and tests.

A person typing a table slips in a few ways; each is made here from the value as printed (its
digits up to the point's own last printed digit):
- ``first``: one unit up or down in the first significant digit (0.657 -> 0.757 or 0.557);
- ``second``: one unit up or down in the second significant digit (0.657 -> 0.667 or 0.647;
  0.0423 -> 0.0433);
- ``swap``: the last two printed digits exchanged (0.657 -> 0.675), where that changes the value
  by 1 % or more (``swap-small`` otherwise, reported apart: 0.965 -> 0.956 is inside what two
  evaluations of one salt differ by).
"""

from __future__ import annotations

import math
from collections.abc import Iterator

KINDS = ("first", "second", "swap", "swap-small")


def printed(value: float, precision: float) -> str:
    """The value as the table prints it, to its last printed digit."""
    decimals = max(0, -round(math.log10(precision)))
    return f"{value:.{decimals}f}"


def slips(text: str) -> Iterator[tuple[str, float]]:
    """(kind, slipped value) for every slip of a printed positive value; values that a slip
    would make zero or negative are not made."""
    value = float(text)
    decimals = len(text.split(".")[1]) if "." in text else 0
    top = math.floor(math.log10(value))
    for kind, step in (("first", 10.0 ** top), ("second", 10.0 ** (top - 1))):
        for sign in (1, -1):
            new = round(value + sign * step, decimals + 1)
            if new > 0:
                yield kind, new
    chars = list(text)
    digits = [i for i, c in enumerate(chars) if c.isdigit()]
    a, b = digits[-2], digits[-1]
    if chars[a] != chars[b]:
        chars[a], chars[b] = chars[b], chars[a]
        new = float("".join(chars))
        if new > 0:
            yield ("swap" if abs(new / value - 1) >= 0.01 else "swap-small"), new
