"""Text for a terminal: control characters from layers or users are defused.

A sidecar, a zone note or a site file may hold escape sequences (``ESC[2J``
clears a screen); text that neve prints passes through :func:`printable`,
which keeps newlines and tabs and replaces every other control character
with U+FFFD.

>>> printable("zone A\\x1b[2J note")
'zone A\\ufffd[2J note'
"""

from __future__ import annotations

import re

_CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f-\x9f]")


def printable(text: str) -> str:
    """Replace control characters other than newline and tab with U+FFFD."""
    return _CONTROL.sub("\ufffd", text)
