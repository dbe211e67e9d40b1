"""The cover: project, site, dates, eaveline's version and the weather, with its caveat."""

from __future__ import annotations

import datetime as dt
from importlib import metadata

from .blocks import Paragraph, Section, Table, number

__all__ = ["cover_section", "eaveline_version"]


def eaveline_version() -> str:
    """Return the installed eaveline's version (``"unknown"`` when it is not installed)."""
    try:
        return metadata.version("eaveline")
    except metadata.PackageNotFoundError:
        return "unknown"


def _saved_text(saved: dt.datetime | None) -> str:
    if saved is None:
        return "not saved to a file"
    return saved.strftime("%Y-%m-%d %H:%M %Z").strip()


def cover_section(evaluation, *, report_date: dt.date, saved: dt.datetime | None,
                  source: str | None = None) -> Section:
    """Return the cover of a report.

    Parameters
    ----------
    evaluation : layout.study.analysis.Evaluation
    report_date : datetime.date, keyword-only
        Printed as the date of the report.
    saved : datetime.datetime or None, keyword-only
        When the project file was last saved; None: not saved.
    source : str, keyword-only, optional
        The project file's name.
    """
    project = evaluation.project
    site = project.site
    weather = evaluation.weather
    totals = evaluation.totals
    rows = [
        ("project", project.name or "(unnamed)"),
        ("project file", source or "(not saved to a file)"),
        ("site", site.name or "(no address entered)"),
        ("latitude, longitude", f"{site.latitude:.5f}°, {site.longitude:.5f}°"),
        ("time zone", str(site.timezone)),
        ("date of this report", report_date.isoformat()),
        ("project last saved", _saved_text(saved)),
        ("eaveline version", eaveline_version()),
        ("weather", weather.source),
        ("module", f"{project.module.name or 'module'}, {project.module.power_w:g} W"),
        ("system", f"{totals['modules']} modules, {number(totals['power_kwp'], 2)} kWp, "
                   f"{number(totals['energy_kwh'], 0, thousands=True)} kWh/yr "
                   f"{totals['energy_basis']}, shade loss {number(totals['shade_loss_pct'])} %"),
    ]
    blocks = [Paragraph("Solar access, TOF and TSRF of each array and module, with the "
                        "obstructions and how they were measured.", style="lead"),
              Table(("", ""), tuple(rows), align="ll", key="cover")]
    if weather.is_clear_sky:
        blocks.append(Paragraph(weather.caveat, style="note"))
    blocks.extend(Paragraph(f"Weather: {note}.", style="note") for note in weather.notes)
    if not totals["modules"]:
        blocks.append(Paragraph("This layout has no modules: the report shows the roof, its "
                                "zones and obstructions, and no figures."))
    return Section("cover", "Shade report", tuple(blocks))
