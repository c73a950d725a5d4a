"""Counting significant figures in printed text (shared by the rounding tests; no values here).

Engineering rounding (issue 11; common practice): a calculation step shows
three significant figures. A printed number's significant figures are its
digits without the leading zeros and, for a whole number, without the
trailing zeros (``1480`` has three, ``0.0479`` three, ``2.20`` three,
``2.198`` four).
"""

from __future__ import annotations

import re

#: a number as printed: not part of a word, a clause number (7.3-1) or a hash
NUMBER = re.compile(r"(?<![\w.\-])-?\d+(?:\.\d+)?(?![\w.]|-\d)")


def significant_figures(token: str) -> int:
    """Significant figures of a printed number.

    >>> [significant_figures(t) for t in ("1480", "0.0479", "2.20", "2.198", "0", "30")]
    [3, 3, 3, 4, 1, 1]
    """
    t = token.lstrip("-")
    if "." in t:
        digits = t.replace(".", "").lstrip("0")
        return max(len(digits), 1)
    stripped = t.strip("0")
    return max(len(stripped), 1)


def too_precise(text: str, figures: int = 3) -> list[str]:
    """The numbers of ``text`` printed with more than ``figures`` significant figures.

    >>> too_precise("hd = 0.43 x 40^(1/3) - 1.5 = 2.198; x 1479.55; 49.6")
    ['2.198', '1479.55']
    """
    return [m.group() for m in NUMBER.finditer(text) if significant_figures(m.group()) > figures]
