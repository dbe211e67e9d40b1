"""``summary``: a project's roofs, rules, portrait against landscape, and the layout in force."""

from __future__ import annotations

import textwrap

from ..fill.placement import compare_orientations
from ..fill.rules import CAUTION
from ..project import Project
from ..units import format_length
from .project_input import load_command_project
from .text import bullets, text_table

__all__ = ["SAFETY_LINES", "project_summary", "run_summary"]

SAFETY_LINES = (
    "Setbacks shown are defaults from the code edition named above; the authority having "
    "jurisdiction decides.",
    "Structural review of added load (IRC R324.4, ASCE 7) and PV electrical work (NFPA 70 "
    "Article 690, rapid shutdown 690.12) need licensed people.",
    "Roof work above 6 ft needs fall protection (OSHA 1926.501(b)(13)).",
)


def project_summary(project: Project) -> str:
    """Return the plain-text summary that ``python -m layout summary`` prints."""
    units = project.units
    length = (lambda m: format_length(m, units))  # noqa: E731 - a local formatter
    site = project.site
    ns = "N" if site.latitude >= 0 else "S"
    ew = "E" if site.longitude >= 0 else "W"
    out = [
        f"eaveline project: {project.name or '(unnamed)'}",
        f"Site: {site.name or '(unnamed)'}, {abs(site.latitude):.4f}° {ns}, "
        f"{abs(site.longitude):.4f}° {ew}, {site.timezone}, "
        f"{site.altitude_m:.0f} m above sea level",
        f"Module: {project.module.name or 'module'}, {project.module.length_m:.3f} × "
        f"{project.module.width_m:.3f} m, {project.module.power_w:.0f} W, "
        f"efficiency {100 * project.module.efficiency:.1f} %",
        f"Clearance rules: {project.clearance.name} ({project.clearance.source})",
        "",
        "Roof faces",
    ]
    rows = []
    for building in project.buildings:
        for face in building.faces:
            rows.append((
                face.name, f"{face.pitch_deg:.1f}°", f"{face.azimuth_deg:.0f}°",
                length(face.eave_height_m), f"{face.plan_area_m2:.1f}", f"{face.true_area_m2:.1f}",
                " ".join(face.edge_kinds),
            ))
    out.append(text_table(("face", "pitch", "azimuth", "eave height", "plan m²", "true m²",
                           "edges in order"), rows, "lrrrrrl"))
    arrays = "every face" if project.array_faces is None else ", ".join(project.array_faces)
    out += ["", f"Portrait against landscape (modules on: {arrays}; same rules)"]
    rows = []
    for building in project.buildings:
        table = compare_orientations(building, project.module, rules=project.clearance,
                                     options=project.fill, obstructions=project.scene_obstructions,
                                     pathway_faces=project.pathways,
                                     latitude=project.site.latitude,
                                     array_faces=project.array_faces_of(building))
        for record in table.itertuples():
            rows.append((building.name or "building", record.option, record.modules,
                         f"{record.power_kwp:.2f}", f"{record.usable_use_pct:.0f} %",
                         f"{record.modules} / {record.bound}"))
    out.append(text_table(("building", "option", "modules", "kWp", "usable area used",
                           "of the bound"), rows, "llrrrr"))
    out += textwrap.wrap("The bound is the most modules the usable areas could hold with the "
                         "same orientation and gaps, by area and by the lines every module "
                         "must cross: no fill can place more.", 96)
    layout = project.layout()
    by_face: dict[str, int] = {}
    for module in layout.active_modules:
        by_face[module.face] = by_face.get(module.face, 0) + 1
    out += [
        "",
        f"Layout in force ({project.fill.orientation}, {project.fill.rows} rows): "
        f"{layout.count} modules, {layout.kwp(project.module):.2f} kWp"
        + (f", {len(layout.removed)} removed by the user" if layout.removed else ""),
    ]
    out.append(text_table(("face", "modules"), sorted(by_face.items())))
    inverter = project.inverter
    design = project.strings
    out += ["", "Strings: " + (
        f"inverter {inverter.name or '(unnamed)'} × {inverter.count}, "
        f"{inverter.total_inputs} tracking inputs, {inverter.total_ac_power_w / 1000:.1f} kW AC"
        if inverter is not None else "no inverter chosen")
        + "; design temperatures "
        + (f"{design.record_low_c:g} °C to {design.design_high_c:g} °C"
           if design.record_low_c is not None and design.design_high_c is not None
           else "not typed yet")
        + " (python -m layout strings)"]
    notes = (*layout.notes, *project.load_notes)
    if notes:
        out += ["", "Notes", *bullets(notes)]
    if project.sources:
        out += ["", "Imported items", *bullets(
            f"{', '.join(s['items'])}: {s['note']} ({s.get('file', s['kind'])}"
            + (f", acquired {s['acquired']}" if s.get("acquired") else "") + ")"
            for s in project.sources)]
    out += ["", "Cautions", *bullets((CAUTION, *SAFETY_LINES[1:]))]
    return "\n".join(out)


def run_summary(project: str | None, *, demo: bool = False) -> None:
    """Print the summary of a project file or of the demo project (``summary``).

    Parameters
    ----------
    project : str or None
        The project file, or None with ``demo``.
    demo : bool, keyword-only, optional
        ``--demo``: summarise the bundled demo project.
    """
    loaded, _ = load_command_project(project, demo)
    print(project_summary(loaded))
