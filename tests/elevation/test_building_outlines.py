"""Building outlines from points: the rectangle's sides placed where roof gives way to ground.

The truth is the rectangle that made the points (closed-form geometry): points uniform in
plan, classed roof inside it and ground outside at their true place, then moved by Gaussian
plan noise, as layout.elevation.synthetic samples a scan.
"""

from __future__ import annotations

import numpy as np
import shapely

from layout.elevation.footprints import fit_sides_to_classes, rectangle_from_points

#: The generating rectangle: 12 m × 9 m about (3, -2), turned 23° counter-clockwise.
TURN_DEG = 23.0
HALF = (6.0, 4.5)
CENTRE = (3.0, -2.0)


def _to_site(u, v):
    c, s = np.cos(np.radians(TURN_DEG)), np.sin(np.radians(TURN_DEG))
    return CENTRE[0] + u * c - v * s, CENTRE[1] + u * s + v * c


def _to_local(x, y):
    c, s = np.cos(np.radians(TURN_DEG)), np.sin(np.radians(TURN_DEG))
    dx, dy = np.asarray(x) - CENTRE[0], np.asarray(y) - CENTRE[1]
    return dx * c + dy * s, -dx * s + dy * c


def _scan(seed, density=12.0, sigma_m=0.10):
    rng = np.random.default_rng(seed)
    n = rng.poisson(density * 16.0 * 13.0)
    u = rng.uniform(-8.0, 8.0, n)
    v = rng.uniform(-6.5, 6.5, n)
    roof = (np.abs(u) < HALF[0]) & (np.abs(v) < HALF[1])  # class at the true place
    x, y = _to_site(u, v)
    return x + rng.normal(0, sigma_m, n), y + rng.normal(0, sigma_m, n), roof


def _side_errors(polygon):
    """Outward error of each side (west, east, south, north in the rectangle's axes) [m]."""
    u, v = _to_local(*np.asarray(polygon.exterior.coords)[:-1].T)
    return np.array([-u.min() - HALF[0], u.max() - HALF[0], -v.min() - HALF[1],
                     v.max() - HALF[1]])


def test_sides_from_classes_halve_the_scatter_of_the_quantile_rectangle():
    quantile, probit = [], []
    for seed in range(12):
        x, y, roof = _scan(seed)
        rect = rectangle_from_points(x[roof], y[roof], TURN_DEG)
        fitted = fit_sides_to_classes(rect, x, y, roof, ~roof)
        quantile.append(_side_errors(rect))
        probit.append(_side_errors(fitted))
    quantile, probit = np.array(quantile), np.array(probit)
    rms_q = float(np.sqrt(np.mean(quantile ** 2)))
    rms_p = float(np.sqrt(np.mean(probit ** 2)))
    # measured (48 sides each): 0.070 m rms from the quantiles, 0.017 m from the classes
    assert rms_p < 0.03 and rms_p < 0.5 * rms_q
    # no bias: the mean of 48 sides within 3 standard errors of the generating rectangle
    assert abs(float(np.mean(probit))) < 3.0 * rms_p / np.sqrt(probit.size)


def test_classes_that_change_sharply_put_the_side_midway_across_the_gap():
    # a regular 0.3 m grid, no noise: the last roof point 0.15 m inside each side and the
    # first ground point 0.15 m outside; the side is found between them, on the true line
    g = np.arange(-7.95, 8.0, 0.3)
    u, v = (a.ravel() for a in np.meshgrid(g, g))
    roof = (np.abs(u) < HALF[0]) & (np.abs(v) < HALF[1])
    x, y = _to_site(u, v)
    rect = shapely.Polygon(np.column_stack(_to_site(np.array([-5.7, 5.8, 5.8, -5.7]),
                                                    np.array([-4.3, -4.3, 4.4, 4.4]))))
    fitted = fit_sides_to_classes(rect, x, y, roof, ~roof)
    np.testing.assert_allclose(_side_errors(fitted), 0.0, atol=0.02)


def test_a_side_with_no_ground_beside_it_stays_where_it_was():
    # a party wall on the east: the neighbour's roof, not ground, lies beyond that side
    x, y, roof = _scan(3)
    u, _ = _to_local(x, y)
    neighbour = u > HALF[0]
    rect = rectangle_from_points(x[roof], y[roof], TURN_DEG)
    fitted = fit_sides_to_classes(rect, x, y, roof | neighbour, ~(roof | neighbour))
    assert abs(_side_errors(fitted)[1] - _side_errors(rect)[1]) < 1e-9
    assert fitted.area > 0
