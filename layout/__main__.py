"""Command line: ``python -m layout COMMAND``.

Commands
--------
summary [PROJECT | --demo]
    Print the project's roofs, rules, the portrait/landscape comparison and the layout in force.
check PROJECT
    Check a project file and list every problem with its path; exit status 1 if any.
"""

from __future__ import annotations

import argparse
import sys
import textwrap
from collections.abc import Sequence

from .clearance import CAUTION
from .errors import InputError
from .placement import compare_orientations
from .project import Project, ProjectFileError, demo_project_path, load_project
from .units import format_length

SAFETY_LINES = (
    "Setbacks shown are defaults from the code edition named above; the authority having "
    "jurisdiction decides.",
    "Structural review of added load (IRC R324.4, ASCE 7) and PV electrical work (NFPA 70 "
    "Article 690, rapid shutdown 690.12) need licensed people.",
    "Roof work above 6 ft needs fall protection (OSHA 1926.501(b)(13)).",
)


def _table(headers: Sequence[str], rows: Sequence[Sequence], aligns: str = "") -> str:
    cells = [[str(h) for h in headers]] + [[str(c) for c in row] for row in rows]
    widths = [max(len(row[i]) for row in cells) for i in range(len(headers))]
    aligns = aligns or "l" + "r" * (len(headers) - 1)
    lines = []
    for n, row in enumerate(cells):
        parts = [c.ljust(w) if a == "l" else c.rjust(w) for c, w, a in zip(row, widths, aligns,
                                                                            strict=True)]
        lines.append("  " + "  ".join(parts).rstrip())
        if n == 0:
            lines.append("  " + "  ".join("-" * w for w in widths))
    return "\n".join(lines)


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
    out.append(_table(("face", "pitch", "azimuth", "eave height", "plan m²", "true m²",
                       "edges in order"), rows, "lrrrrrl"))
    arrays = "every face" if project.array_faces is None else ", ".join(project.array_faces)
    out += ["", f"Portrait against landscape (modules on: {arrays}; same rules)"]
    rows = []
    for building in project.buildings:
        table = compare_orientations(building, project.module, rules=project.clearance,
                                     options=project.fill, obstructions=project.obstructions,
                                     pathway_faces=project.pathways,
                                     latitude=project.site.latitude,
                                     array_faces=project.array_faces_of(building))
        for record in table.itertuples():
            rows.append((building.name or "building", record.option, record.modules,
                         f"{record.power_kwp:.2f}", f"{record.usable_use_pct:.0f} %"))
    out.append(_table(("building", "option", "modules", "kWp", "usable area used"), rows,
                      "llrrr"))
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
    out.append(_table(("face", "modules"), sorted(by_face.items())))
    if layout.notes:
        out += ["", "Notes"]
        out += [textwrap.fill(note, 96, initial_indent="  - ", subsequent_indent="    ")
                for note in layout.notes]
    out += ["", "Cautions"]
    out += [textwrap.fill(line, 96, initial_indent="  - ", subsequent_indent="    ")
            for line in (CAUTION, *SAFETY_LINES[1:])]
    return "\n".join(out)


def _load(path: str | None, demo: bool) -> Project:
    if demo == (path is not None):
        raise SystemExit("give a project file or --demo (one of the two)")
    return load_project(demo_project_path() if demo else path)


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status."""
    parser = argparse.ArgumentParser(prog="python -m layout",
                                     description="eaveline: rooftop PV layout and shading.")
    commands = parser.add_subparsers(dest="command", required=True)
    summary = commands.add_parser("summary", help="print a project's layout summary")
    summary.add_argument("project", nargs="?", help="a .eaveline.json project file")
    summary.add_argument("--demo", action="store_true", help="use the bundled demo project")
    check = commands.add_parser("check", help="check a project file and list its problems")
    check.add_argument("project", help="a .eaveline.json project file")
    args = parser.parse_args(argv)

    try:
        if args.command == "summary":
            print(project_summary(_load(args.project, args.demo)))
        elif args.command == "check":
            project = load_project(args.project)
            print(f"{args.project}: no problems; {sum(len(b.faces) for b in project.buildings)} "
                  f"roof faces, {len(project.obstructions)} obstructions")
    except (ProjectFileError, InputError) as err:
        print(err, file=sys.stderr)
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
