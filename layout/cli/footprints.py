"""import-footprint: buildings from a GeoJSON footprint file, in a new or an existing project.

``python -m layout import-footprint FOOTPRINTS.geojson -o PROJECT.eaveline.json`` starts a
project whose site is the footprints' centroid (time zone looked up offline), with a generic
module and the IFC 2021 residential setbacks; ``--into PROJECT`` adds the buildings to an
existing project about its own site instead. Each building gets one roof face over its
footprint, flat unless ``--pitch`` is given; pitches and edges are edited per face afterwards.
"""

from __future__ import annotations

from pathlib import Path

from ..edits import add_footprints, project_from_footprints
from ..fill.rules import ifc_2021_residential
from ..project import FILE_SUFFIX, load_project, save_project
from ..scene.modules import generic_108_half_cell
from ..units import parse_length, parse_pitch

__all__ = ["run_import_footprint"]


def run_import_footprint(source, *, out, into=None, pitch: str = "0",
                         eave_height: str = "3 m") -> Path:
    """Run ``import-footprint``: read the file, print what was found, write the project.

    Parameters
    ----------
    source : str or pathlib.Path
        The GeoJSON file.
    out : str or pathlib.Path
        The project file to write (``.eaveline.json`` is added when missing).
    into : str or pathlib.Path, optional
        An existing project to add the buildings to.
    pitch : str, default "0"
        Roof pitch, in degrees or rise in 12 (``"4/12"``).
    eave_height : str, default "3 m"
        Eave height, with its unit (``"10 ft"``); a bare number is metres.

    Returns
    -------
    pathlib.Path
        The file written.
    """
    pitch_deg = parse_pitch(pitch, field="--pitch")
    eave_m = parse_length(eave_height, field="--eave-height")
    if into is not None:
        project, found = add_footprints(load_project(into), source, pitch_deg=pitch_deg,
                                        eave_height_m=eave_m)
    else:
        project, found = project_from_footprints(
            source, generic_108_half_cell(400.0), ifc_2021_residential(), pitch_deg=pitch_deg,
            eave_height_m=eave_m, name=Path(source).stem)
    site = project.site
    print(f"{len(found.outlines)} footprint(s) from {Path(source).name} ({found.crs}): "
          f"{', '.join(found.names)}")
    print(f"site {site.latitude:.6f}, {site.longitude:.6f} ({site.timezone})")
    for note in found.notes:
        print(f"note: {note}")
    out = Path(out)
    if not out.name.endswith(FILE_SUFFIX):
        out = out.with_name(out.name.removesuffix(".json") + FILE_SUFFIX)
    path = save_project(project, out)
    print(f"wrote {path}")
    print("Footprints give outlines only: set each face's pitch and edges in the planner, and "
          "check them on site; the authority having jurisdiction decides setbacks.")
    return path
