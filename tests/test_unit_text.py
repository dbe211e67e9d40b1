"""Lengths and areas the core writes in metres, shown in the project's units (widgets.unit_text).

Outside reference: the exact inch (25.4 mm) and foot (0.3048 m) of the 1959 international
yard and pound agreement; a square foot is 0.09290304 m².
"""

import pytest

from widgets.plan_key import key_lines
from widgets.unit_text import in_units


@pytest.mark.parametrize("metric, imperial", [
    ("clear ring 0.3 m around it", "clear ring 11 13/16 in around it"),  # 300 / 25.4 = 11.81
    ("ridge setback 18 in (457 mm): array covers 24 %", "ridge setback 18 in: array covers 24 %"),
    ("pathway 36 in (914 mm) wide", "pathway 36 in wide"),
    ("usable 92.9 m²", "usable 1,000 ft²"),  # 92.90304 m² is 1,000 ft²
    ("a 1.2192 m aisle", "a 4 ft 0 in aisle"),
    ("version 1.2 of 3 modules at 40 %", "version 1.2 of 3 modules at 40 %"),  # no unit: kept
])
def test_metric_lengths_become_feet_and_inches(metric, imperial):
    assert in_units(metric, "imperial") == imperial
    assert in_units(metric, "metric") == metric


def test_the_key_names_every_mark_the_plan_draws():
    meanings = " ".join(text for _, text in key_lines())
    for mark in ("thick outline", "hollow dashed", "hatched", "tree", "dark dot", "hollow ring",
                 "diamond", "drag it to move that building", "dashed outline", "shadow",
                 "from elevation data, not surveyed"):
        assert mark in meanings
