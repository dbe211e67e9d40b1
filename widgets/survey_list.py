"""The Survey tab's HTML: the readout of one entry's computed height and the survey list.

The fixed notes and headings of the tab, and plain functions of a survey and the project's
units, with no widget state:
:func:`readout_html` shows what the core computes from one entry (its height with the range
over the tolerances, foot, top and position), :func:`list_html` the table of every entry.
"""

from __future__ import annotations

import html

from layout.scene.survey import SurveyEntry, entry_geometry, height_range, survey_table

from .forms import length_text
from .survey_fields import height_text

__all__ = [
    "IMPORT_HELP_HTML",
    "NOTE_HTML",
    "START_HTML",
    "error_html",
    "heading_html",
    "hint_html",
    "import_note_html",
    "import_summary",
    "list_html",
    "readout_html",
]

#: The note at the top of the Survey tab.
NOTE_HTML = ("<div style='font-size:12px;color:#5d6b6a'>Readings from a known point (the "
             "station). Angles in degrees, up positive; bearings clockwise from north. "
             "Each ± box holds the reading's tolerance, pre-filled with the default. "
             "Surveyed objects are drawn on the plan with a hollow ring and move only "
             "with their readings.</div>")

#: What a survey CSV holds, shown above the import box.
IMPORT_HELP_HTML = ("<div style='font-size:12px;color:#5d6b6a'>One row per obstruction, "
                    "columns as in <code>layout.scene.survey.SURVEY_COLUMNS</code> (required: "
                    "kind, bearing_deg, distance_m, top_angle_deg). Good rows are added; each "
                    "bad row is listed with its row number and column.</div>")

#: A section heading of the Survey tab: ``heading_html("Import readings")``.
heading_html = "<div style='margin-top:8px;color:#34403f'><b>{}</b></div>".format

#: A quiet grey note, such as a unit or what is still needed (the text is HTML already).
hint_html = "<span style='font-size:12px;color:#5d6b6a'>{}</span>".format

#: A message in a calm dark red (the text is HTML already).
error_html = "<span style='color:#8a2d2d;font-size:12px'>{}</span>".format

#: The readout while a new entry is typed and not yet complete.
START_HTML = hint_html("Type the readings of one obstruction; its height appears here and the "
                       "obstruction on the plan as soon as they are complete.")


def import_note_html(text: str, *, error: bool = False) -> str:
    """Return the HTML of the import note: ``text`` as written, dark red when ``error``.

    Parameters
    ----------
    text : str
        Plain text, its lines kept.
    error : bool, optional
        Whether the note reports a problem.

    Returns
    -------
    str
        An HTML ``pre``.
    """
    colour = "#8a2d2d" if error else "#34403f"
    return (f"<pre style='font-size:12px;color:{colour};"
            f"white-space:pre-wrap'>{html.escape(text)}</pre>")


def import_summary(added: int, problems, name: str) -> str:
    """Return the plain text reporting a CSV import: rows added, then every refused row.

    Parameters
    ----------
    added : int
        The number of entries added.
    problems : sequence of layout.scene.survey.SurveyProblem
        The rows refused.
    name : str
        The file's name.

    Returns
    -------
    str
        One or more lines.
    """
    lines = []
    if added:
        lines.append(f"Added {added} {'entry' if added == 1 else 'entries'} from {name}.")
    else:
        lines.append(f"No good rows in {name}.")
    if problems:
        lines.append(f"{len(problems)} {'problem' if len(problems) == 1 else 'problems'} "
                     "(those rows were left out):")
        lines.extend(f"  {p}" for p in problems)
    return "\n".join(lines)


def readout_html(entry: SurveyEntry, units: str) -> str:
    """Return the HTML of an entry's computed height, its range, foot, top and position.

    Parameters
    ----------
    entry : SurveyEntry
        The entry.
    units : str
        ``"metric"`` or ``"imperial"``.

    Returns
    -------
    str
        An HTML ``div``.
    """
    g = entry_geometry(entry)
    low, high = height_range(entry)
    parts = [f"<b class='eaveline-survey-height'>Height {height_text(g['height_m'], units)}"
             f"</b> <span class='eaveline-survey-height-range'>(from "
             f"{height_text(low, units)} to {height_text(high, units)} over the "
             f"tolerances)</span>",
             f"foot at z = {length_text(g['base_z_m'], units)}, top at z = "
             f"{length_text(g['top_z_m'], units)}",
             f"at x = {length_text(g['x_m'], units)}, y = {length_text(g['y_m'], units)}: "
             f"{length_text(g['horizontal_distance_m'], units)} from the station on true "
             f"bearing {g['true_bearing_deg']:.1f}°"]
    if "crown_base_m" in g:
        parts.append(f"crown base {length_text(g['crown_base_m'], units)} above the foot")
    return ("<div style='font-size:13px;color:#34403f;line-height:1.5'>"
            + "<br>".join(parts) + "</div>")


def list_html(entries, index: int | None, units: str) -> str:
    """Return the HTML table of a survey, the entry ``index`` in bold.

    Parameters
    ----------
    entries : sequence of SurveyEntry
        The survey.
    index : int or None
        The entry shown in the form, if any.
    units : str
        ``"metric"`` or ``"imperial"``.

    Returns
    -------
    str
        An HTML table, or a short note when the survey is empty.
    """
    if not entries:
        return hint_html("No surveyed obstructions yet.")
    table = survey_table(entries)
    rows = []
    for i, r in enumerate(table.itertuples(index=False)):
        weight = "bold" if i == index else "normal"
        rows.append(
            f"<tr style='font-weight:{weight}'><td>{i + 1}</td>"
            f"<td>{html.escape(str(r.name or ''))}</td><td>{html.escape(r.kind)}</td>"
            f"<td style='text-align:right'>{length_text(r.x_m, units)}</td>"
            f"<td style='text-align:right'>{length_text(r.y_m, units)}</td>"
            f"<td style='text-align:right'>{height_text(r.height_m, units)}</td>"
            f"<td style='text-align:right'>{height_text(r.height_min_m, units)} – "
            f"{height_text(r.height_max_m, units)}</td></tr>")
    return ("<table style='font-size:12px;border-collapse:collapse'><tr>"
            "<th>#</th><th style='text-align:left'>name</th><th style='text-align:left'>"
            "kind</th><th>x (east)</th><th>y (north)</th><th>height</th>"
            "<th>height over the tolerances</th></tr>" + "".join(rows) + "</table>")


def crosscheck_html(checks) -> str:
    """Return the survey's cross-check against elevation data as an HTML list.

    Parameters
    ----------
    checks : sequence of layout.elevation.SurveyCheck
        One per survey entry (:func:`layout.elevation.cross_check`).

    Returns
    -------
    str
        A heading and one line per entry, the ones outside their tolerance in red; empty
        when there is nothing to compare.
    """
    if not checks:
        return ""
    lines = []
    for check in checks:
        colour = "#a33" if check.flagged else "#2e6b3a"
        lines.append(f"<li style='color:{colour}'>{html.escape(check.text())}</li>")
    return ("<div style='font-size:12px;margin-top:6px'><b>Against the elevation data</b> "
            "(neither side is taken as right: the data may be old, a reading may be off)"
            f"<ul style='padding-left:18px;margin:4px 0'>{''.join(lines)}</ul></div>")
