"""JSON output of the commands: the report version, plain JSON data, and printing it."""

from __future__ import annotations

import json
import math

import numpy as np

__all__ = ["REPORT_VERSION", "plain_json", "print_json"]

#: Version of the JSON report of ``evaluate --json`` (also stamped on ``compare --json``);
#: raised only when a key changes meaning.
REPORT_VERSION = 1


def plain_json(value):
    """Return plain JSON data: numpy scalars to Python, NaN and infinities to None.

    Parameters
    ----------
    value : object
        Nested dicts, lists and tuples of scalars; dict keys become str.

    Returns
    -------
    object
        The same structure with lists for tuples, built of JSON types only.
    """
    if isinstance(value, dict):
        return {str(k): plain_json(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [plain_json(v) for v in value]
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        return float(value) if math.isfinite(value) else None
    return value


def print_json(data) -> None:
    """Print plain JSON data as one indented object (non-ASCII kept, NaN refused).

    Parameters
    ----------
    data : object
        Plain JSON data, as :func:`plain_json` returns it.
    """
    print(json.dumps(data, indent=1, allow_nan=False, ensure_ascii=False))
