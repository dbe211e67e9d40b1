"""``strings``: string sizing by NEC 690.7(A), and the rows, shade-aware and drawn stringings.

Printed as text (the values used and the limit that sets each length, the options side by
side, the strings of the chosen method) or, with ``--json``, as one JSON object:

``report_version``, ``project``
    As in ``evaluate --json``.
``sizing``
    ``min_length``, ``max_length``, ``min_length_limit``, ``max_length_limit``,
    ``strings_per_input``, ``strings_per_input_limit``, ``voc_cold_v``, ``vmp_cold_v``,
    ``vmp_hot_v``, ``voc_factor``, ``cell_temp_hot_c``, ``roof_rise_c``,
    ``roof_rise_source``, ``design`` (the typed values), ``inverter``, ``lines`` (in words).
``options``
    One object per method: ``method``, ``label``, ``strings``, ``modules``, ``inputs_used``,
    ``dc_ac_ratio``, ``energy_kwh``, ``gain_kwh``, ``gain_pct`` (over the row stringing).
``plan``
    The chosen method's ``method``, ``strings`` (each ``{"string", "input", "face",
    "modules", "energy_kwh", "longest_link_m", "module_ids"}``), ``unstrung``, ``notes``.
``notes``, ``cautions``
    Lists of str.
"""

from __future__ import annotations

import json
import os
from pathlib import Path

from ..errors import InputError
from ..scene.inverter import InverterSpec
from ..study.analysis import Analysis
from ..study.string_options import StringingComparison, compare_stringing, project_sizing
from .json_output import REPORT_VERSION, plain_json, print_json
from .progress import terminal_progress
from .project_input import load_command_project, with_overrides
from .text import bullets, number, text_table

__all__ = ["STRING_CAUTIONS", "read_inverter", "run_strings", "strings_report",
           "strings_summary"]

#: Printed under every stringing.
STRING_CAUTIONS = (
    "String sizing is a planning aid: the installer's licensed electrician and the inverter "
    "maker's sizing tools decide, and the authority having jurisdiction enforces NFPA 70 "
    "(NEC) Article 690.",
    "The design temperatures are the ones typed in the project; check them against the "
    "site's published design data.",
    "Energies are DC through the string model of bypass diodes; strings in parallel on one "
    "input are each taken at their own best point.",
)


def read_inverter(path) -> InverterSpec:
    """Read an inverter file: one JSON object with the fields of :class:`InverterSpec`.

    Parameters
    ----------
    path : str or os.PathLike

    Returns
    -------
    layout.scene.inverter.InverterSpec
    """
    source = Path(path)
    try:
        data = json.loads(source.read_text(encoding="utf-8"))
    except OSError as err:
        raise InputError("--inverter", f"cannot read the file: {err.strerror}",
                         value=os.fspath(source)) from None
    except json.JSONDecodeError as err:
        raise InputError("--inverter", f"is not valid JSON: {err.msg} at line {err.lineno}",
                         value=os.fspath(source)) from None
    try:
        return InverterSpec.from_dict(data)
    except InputError as err:
        raise err.at("inverter") from None


def _plan_rows(comparison: StringingComparison, method: str):
    plan = comparison.plans[method]
    table = comparison.strings[comparison.strings["method"] == method]
    out = []
    for (_, row), ids in zip(table.iterrows(), plan.strings, strict=True):
        entry = {key: row[key] for key in ("string", "input", "face", "modules", "energy_kwh",
                                           "longest_link_m")}
        entry["module_ids"] = list(ids)
        out.append(entry)
    return out


def strings_report(comparison: StringingComparison, method: str, *,
                   project_name: str = "", source: str | None = None) -> dict:
    """Return the JSON report of ``python -m layout strings --json`` (keys above)."""
    sizing = comparison.sizing
    plan = comparison.plans[method]
    report = {
        "report_version": REPORT_VERSION,
        "project": {"name": project_name, "file": source},
        "sizing": {
            key: getattr(sizing, key) for key in (
                "min_length", "max_length", "min_length_limit", "max_length_limit",
                "strings_per_input", "strings_per_input_limit", "voc_cold_v", "vmp_cold_v",
                "vmp_hot_v", "voc_factor", "cell_temp_hot_c", "roof_rise_c",
                "roof_rise_source")
        } | {"design": sizing.design.to_dict(), "inverter": sizing.inverter.to_dict(),
             "lines": sizing.lines()},
        "options": comparison.table.reset_index().to_dict("records"),
        "plan": {"method": method, "strings": _plan_rows(comparison, method),
                 "unstrung": list(plan.unstrung), "notes": list(plan.notes)},
        "notes": list(comparison.notes),
        "cautions": list(STRING_CAUTIONS),
    }
    return plain_json(report)


def strings_summary(comparison: StringingComparison, method: str, *,
                    project_name: str = "") -> str:
    """Return the plain text that ``python -m layout strings`` prints."""
    sizing = comparison.sizing
    plan = comparison.plans[method]
    out = [f"eaveline strings: {project_name or '(unnamed)'}",
           f"Module: {sizing.module.name or '(unnamed)'}; inverter: "
           f"{sizing.inverter.name or '(unnamed)'} × {sizing.inverter.count}", "",
           "String sizing (NEC 690.7(A))", *bullets(sizing.lines()), "", "Options"]
    out.append(text_table(
        ("option", "strings", "modules", "inputs", "DC/AC", "kWh/yr", "gain kWh", "gain %"),
        [(r.label, r.strings, r.modules, r.inputs_used, number(r.dc_ac_ratio, 2),
          number(r.energy_kwh, 0, thousands=True), number(r.gain_kwh, 1),
          number(r.gain_pct, 2)) for r in comparison.table.itertuples()]))
    out += ["", f"Strings {comparison.table.loc[method, 'label']}"]
    out.append(text_table(
        ("string", "input", "face", "modules", "kWh/yr", "longest link m", "modules"),
        [(r["string"], r["input"], r["face"], r["modules"], number(r["energy_kwh"], 0,
                                                                    thousands=True),
          number(r["longest_link_m"], 2), " ".join(r["module_ids"]))
         for r in _plan_rows(comparison, method)], "lrlrrrl"))
    notes = list(plan.notes) + list(comparison.notes)
    if plan.unstrung:
        notes.append(f"unstrung: {', '.join(plan.unstrung)}")
    if notes:
        out += ["", "Notes", *bullets(notes)]
    out += ["", "Cautions", *bullets(STRING_CAUTIONS)]
    return "\n".join(out)


def run_strings(project: str | None, *, demo: bool = False, inverter: str | None = None,
                method: str = "shade", as_json: bool = False,
                weather: str | None = None) -> None:
    """Size and string a project, compare the options, print the chosen one (``strings``).

    Parameters
    ----------
    project, demo, weather
        The project file or ``--demo``, and ``--weather`` in place of the project's.
    inverter : str, keyword-only, optional
        An inverter file (``--inverter``); None uses the project's (``--from-project``).
    method : {"rows", "shade", "project"}, keyword-only
        The stringing printed in full.
    as_json : bool, keyword-only
        Print :func:`strings_report` instead of :func:`strings_summary`.
    """
    spec = read_inverter(inverter) if inverter else None
    loaded, folder = load_command_project(project, demo)
    loaded = with_overrides(loaded, weather=weather)
    project_sizing(loaded, inverter=spec)  # bad sizing input fails before any evaluation
    with terminal_progress() as progress:
        evaluation = Analysis(loaded, base_dir=folder, progress=progress).result
    comparison = compare_stringing(evaluation, inverter=spec)
    if method not in comparison.plans:
        raise InputError("--method", "has nothing to show: the project has no strings of "
                         "its own", value=method, allowed=", ".join(comparison.plans))
    if as_json:
        source = None if demo else os.fspath(project)
        print_json(strings_report(comparison, method, project_name=loaded.name, source=source))
        return
    print(strings_summary(comparison, method, project_name=loaded.name))
