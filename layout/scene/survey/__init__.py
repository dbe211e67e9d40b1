"""Field readings to obstructions: heights, positions, tolerances, sampling and tree growth.

A surveyor does not know how tall a tree is. They stand at a known point (the *station*),
sight the object with a compass, measure a distance with a tape or a laser rangefinder, and
read elevation angles with a clinometer. This package turns those readings into the
obstructions of :mod:`layout.scene.obstructions`, keeps each reading's tolerance, draws
obstruction sets from the tolerances for uncertainty ranges, and projects tree growth over the
years.

Frame and sign conventions
--------------------------
Site frame, metres: x east, y north (true north), z up, as everywhere in eaveline.

* **Elevation angles** [degrees] are from the horizontal at the observer's eye, positive up,
  negative down (the base of a tree below eye level reads negative), strictly between -90 and
  90.
* **Bearings** [degrees] are clockwise from north, 0 to below 360, as a compass reads them.
* **Magnetic declination** [degrees] is the angle from true north to magnetic north, **east
  positive, west negative**: ``true bearing = magnetic bearing + declination``. A compass in a
  place with 10° W declination (-10) that reads 200° points along true 190°. With declination 0
  bearings are taken as true. Every direction in one survey entry (the bearing to the object
  and the optional footprint axis) is read in the same reference and converted alike.
* **Station**: the known point where the observer stands, ``(station_x_m, station_y_m)`` in
  the site frame, with the ground there at ``station_z_m`` and the eye ``eye_height_m`` above
  it.

This package gathers the public names; the work lives in its modules, listed here in the
order they build on each other (each imports only from those above it):

``instruments``
    The field methods as formulas: heights by the tangent and the laser method, bearings and
    positions (the measuring methods are explained there).
``readings``
    :class:`Reading`, a value with its tolerance; the default tolerances and where they come
    from; the limits of each reading field.
``growth``
    Tree growth classes and rates, and a tree as it stands years after the survey.
``kinds``
    The kinds of surveyed object and the obstruction class each builds.
``geometry``
    Where one entry's readings put the object: :func:`entry_geometry`, :func:`height_range`,
    :func:`build_obstruction`, and the check that every shape within the tolerances exists.
``entry``
    :class:`SurveyEntry`, the readings of one obstruction checked on construction, and its
    plain-data form.
``sampling``
    Draws from one entry's tolerances: :func:`sample_readings`, :func:`sample_entry` (the
    distribution is explained there).
``obstruction_sets``
    One obstruction per entry: :func:`obstructions_at_year`, :func:`sample_obstructions`.
``loss_ranges``
    A loss as a range over the tolerances: :func:`loss_range`, :class:`LossRange`.
``table``
    The survey table: its columns, :func:`read_survey_csv`, :func:`entries_from_table`,
    :func:`survey_table`, :class:`SurveyProblem`.
"""

from __future__ import annotations

from .entry import SurveyEntry
from .geometry import build_obstruction, entry_geometry, height_range
from .growth import (
    GROWTH_CLASS_LIMITS_M_PER_YR,
    GROWTH_CLASS_RATES_M_PER_YR,
    PROJECTION_YEARS,
    SYSTEM_LIFE_YEARS,
    grown_tree,
    growth_class,
    growth_rate,
    projected_trees,
)
from .instruments import (
    DEFAULT_EYE_HEIGHT_M,
    METHODS,
    elevation_tangent,
    height_error_from_angle,
    height_laser,
    height_per_degree,
    height_tangent,
    laser_horizontal_distance,
    position_from_bearing,
    true_bearing,
)
from .kinds import BLOCK_KINDS, CYLINDER_KINDS, SURVEY_KINDS
from .loss_ranges import LossRange, loss_range
from .obstruction_sets import obstructions_at_year, sample_obstructions
from .readings import (
    ANGLE_TOLERANCE_DEG,
    BEARING_TOLERANCE_DEG,
    BRACK_WOOD_RELATIVE_AGREEMENT,
    CROWN_TOLERANCE_M,
    LASER_DISTANCE_TOLERANCE_M,
    SIZE_TOLERANCE_M,
    TAPE_DISTANCE_TOLERANCE_M,
    Reading,
    default_tolerance,
)
from .sampling import sample_entry, sample_readings
from .table import (
    COMPUTED_COLUMNS,
    LENGTH_UNITS,
    SURVEY_COLUMNS,
    SurveyProblem,
    entries_from_table,
    read_survey_csv,
    survey_table,
)

__all__ = [
    "ANGLE_TOLERANCE_DEG",
    "BEARING_TOLERANCE_DEG",
    "BLOCK_KINDS",
    "BRACK_WOOD_RELATIVE_AGREEMENT",
    "COMPUTED_COLUMNS",
    "CROWN_TOLERANCE_M",
    "CYLINDER_KINDS",
    "DEFAULT_EYE_HEIGHT_M",
    "GROWTH_CLASS_LIMITS_M_PER_YR",
    "GROWTH_CLASS_RATES_M_PER_YR",
    "LASER_DISTANCE_TOLERANCE_M",
    "LENGTH_UNITS",
    "METHODS",
    "PROJECTION_YEARS",
    "SIZE_TOLERANCE_M",
    "SURVEY_COLUMNS",
    "SURVEY_KINDS",
    "SYSTEM_LIFE_YEARS",
    "TAPE_DISTANCE_TOLERANCE_M",
    "LossRange",
    "Reading",
    "SurveyEntry",
    "SurveyProblem",
    "build_obstruction",
    "default_tolerance",
    "elevation_tangent",
    "entries_from_table",
    "entry_geometry",
    "grown_tree",
    "growth_class",
    "growth_rate",
    "height_error_from_angle",
    "height_laser",
    "height_per_degree",
    "height_range",
    "height_tangent",
    "laser_horizontal_distance",
    "loss_range",
    "obstructions_at_year",
    "position_from_bearing",
    "projected_trees",
    "read_survey_csv",
    "sample_entry",
    "sample_obstructions",
    "sample_readings",
    "survey_table",
    "true_bearing",
]
