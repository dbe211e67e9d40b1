"""eaveline's computational core: roof geometry, setbacks, module placement, shading, energy.

The names a notebook uses most are available here; everything else lives in the subpackage of
its stage, in the order data flows through them:

- :mod:`layout.scene`: what the user describes: site, roof faces and buildings, obstructions,
  module specs, survey readings;
- :mod:`layout.fill`: setbacks and usable area, module placement, rack rows;
- :mod:`layout.sky`: sun path and weather;
- :mod:`layout.shading`: exact ray tests against obstructions, sky-view factors;
- :mod:`layout.power`: irradiance with shade applied, electrical models, metrics;
- :mod:`layout.project`: the saved project document; :mod:`layout.edits` and
  :mod:`layout.history`: editing its roofs, with undo and redo;
- :mod:`layout.study`: the incremental analysis, comparisons, outlooks, portfolios;
- :mod:`layout.cli`: the command line (``python -m layout``, the ``eaveline`` script).

A module imports only from its own stage or earlier ones. Nothing in this package imports a
widget or plotting library.
"""

from .edits import add_building, edit_face, move_building, remove_building
from .errors import InputError
from .fill.faces import FillOptions
from .fill.placed import Layout, PlacedModule
from .fill.placement import compare_orientations, fill_building
from .fill.rules import (
    CAUTION,
    ClearanceRules,
    ifc_2015_residential,
    ifc_2021_commercial,
    ifc_2021_residential,
    no_setbacks,
)
from .fill.usable import usable_area
from .history import ProjectHistory
from .power.string_sizing import StringDesign
from .project import Project, ProjectFileError, load_demo_project, load_project, save_project
from .scene.building import (
    Building,
    flat_roof,
    gable_roof,
    hip_roof,
    l_shaped_gable_roof,
    l_shaped_hip_roof,
    shed_roof,
)
from .scene.inverter import InverterSpec, generic_inverter_7kw, generic_inverter_50kw
from .scene.modules import ModuleSpec, generic_60_cell, generic_72_cell, generic_108_half_cell
from .scene.obstructions import Block, Cylinder, HorizonProfile, Tree
from .scene.roof import RoofFace
from .scene.site import Site, timezone_at
from .scene.templates import RoofTemplate, template_from_text
from .units import (
    feet_to_m,
    inches_to_m,
    parse_coordinate,
    parse_length,
    parse_pitch,
    pitch_from_rise,
)

__version__ = "0.1.0.dev0"

__all__ = [
    "CAUTION",
    "Block",
    "Building",
    "ClearanceRules",
    "Cylinder",
    "FillOptions",
    "HorizonProfile",
    "InputError",
    "InverterSpec",
    "Layout",
    "ModuleSpec",
    "PlacedModule",
    "Project",
    "ProjectFileError",
    "ProjectHistory",
    "RoofFace",
    "RoofTemplate",
    "Site",
    "StringDesign",
    "Tree",
    "add_building",
    "compare_orientations",
    "edit_face",
    "feet_to_m",
    "fill_building",
    "flat_roof",
    "gable_roof",
    "generic_60_cell",
    "generic_72_cell",
    "generic_108_half_cell",
    "generic_inverter_7kw",
    "generic_inverter_50kw",
    "hip_roof",
    "ifc_2015_residential",
    "ifc_2021_commercial",
    "ifc_2021_residential",
    "inches_to_m",
    "l_shaped_gable_roof",
    "l_shaped_hip_roof",
    "load_demo_project",
    "load_project",
    "move_building",
    "no_setbacks",
    "parse_coordinate",
    "parse_length",
    "parse_pitch",
    "pitch_from_rise",
    "remove_building",
    "save_project",
    "shed_roof",
    "template_from_text",
    "timezone_at",
    "usable_area",
]
