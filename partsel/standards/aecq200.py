"""AEC-Q200 (Rev E, 2023) temperature grades of passive components.

Grade 0 -50..+150, 1 -40..+125, 2 -40..+105, 3 -40..+85, 4 0..+70 degC. A lower grade number
is a wider range, and each range holds the ranges of the higher numbers, so an automotive
substitute qualifies when its grade number is equal or lower.
"""

from __future__ import annotations

import numbers

from partsel.errors import UnitError

# AEC-Q200 Rev E temperature grades: grade -> (t_min, t_max) [degC].
GRADES: dict[int, tuple[float, float]] = {
    0: (-50.0, 150.0),
    1: (-40.0, 125.0),
    2: (-40.0, 105.0),
    3: (-40.0, 85.0),
    4: (0.0, 70.0),
}


def _grade(g: int, who: str) -> int:
    if isinstance(g, bool) or not isinstance(g, numbers.Integral) or int(g) not in GRADES:
        raise UnitError(f"{who} AEC-Q200 grade {g!r} is not one of 0, 1, 2, 3, 4")
    return int(g)


def grade_range(g: int) -> tuple[float, float]:
    """Operating range (t_min, t_max) [degC] of AEC-Q200 grade ``g``."""
    return GRADES[_grade(g, "the")]


def at_least(candidate: int | None, original: int | None) -> bool:
    """True when a ``candidate`` grade is as good as the ``original`` (lower number = wider).

    An original without a grade asks for nothing; a candidate without one fails an original
    that has one.
    """
    if original is None:
        return True
    o = _grade(original, "the original's")
    if candidate is None:
        return False
    return _grade(candidate, "the candidate's") <= o
