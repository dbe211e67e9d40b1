"""Lengths and areas written by the core in metres, shown in the project's units.

The core's notes say what it did in metres ("clear ring 0.3 m around it", "usable 45.4 m²");
setback notes also carry the code's own figure ("18 in (457 mm)"). In an imperial project the
planner shows every such length in feet and inches and every area in square feet, and drops a
metric figure in brackets that only repeats the imperial one before it.
"""

from __future__ import annotations

import re

from layout.units import FOOT_M, format_length

__all__ = ["in_units"]

_NUMBER = r"(?<![\w.])(-?\d+(?:\.\d+)?)"
_AREA = re.compile(_NUMBER + r"\s*m²")
_LENGTH = re.compile(_NUMBER + r"\s*(mm|cm|m)(?![\w²])")
# "18 in (457 mm)", "3 ft (914 mm)": the bracket repeats the length before it
_REPEAT = re.compile(r"((?:\d+(?:\.\d+)?\s*(?:ft|in)\b[^()]{0,12}?))\s*\(\s*\d+(?:\.\d+)?\s*"
                     r"(?:mm|cm|m)\s*\)")
_SCALE = {"mm": 0.001, "cm": 0.01, "m": 1.0}


def in_units(text: str, units: str) -> str:
    """Return ``text`` with its metric lengths and areas in the project's units.

    Parameters
    ----------
    text : str
        Plain text from the core (a note, a message).
    units : {"metric", "imperial"}
        The project's units; metric text is returned as it is.
    """
    if units != "imperial" or not text:
        return text
    text = _REPEAT.sub(lambda m: m.group(1).rstrip(), text)
    text = _AREA.sub(lambda m: f"{float(m.group(1)) / FOOT_M**2:,.0f} ft²", text)
    return _LENGTH.sub(
        lambda m: format_length(float(m.group(1)) * _SCALE[m.group(2)], "imperial"), text)
