"""The stringing options of an evaluated project side by side: rows, shade-aware, the user's.

:func:`compare_stringing` sizes the strings of the project's module on its inverter
(:func:`layout.power.string_sizing.size_strings`), strings the active modules by rows and by
shade (:mod:`layout.power.stringing`), checks the user's strings when the project has some,
and runs each option's strings through the string model of bypass diodes
(:func:`layout.power.electrical.dc_strings`) on the evaluation's irradiance, so that the
energies differ only by the grouping. :func:`with_plan` writes a chosen plan into a project.

String sizing is a planning aid: the installer's licensed electrician and the inverter
maker's tools decide (NFPA 70 Article 690).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from ..errors import InputError
from ..power.string_sizing import StringSizing, size_strings
from ..power.stringing import (
    STRINGING_METHODS,
    StringPlan,
    check_strings,
    string_by_rows,
    string_by_shade,
    string_energy_kwh,
)

__all__ = [
    "StringingComparison",
    "compare_stringing",
    "evaluation_strings",
    "module_string_columns",
    "project_sizing",
    "with_plan",
]

#: What each option is called in tables and on screen.
METHOD_LABELS = {"rows": "by rows", "shade": "shade-aware", "project": "as drawn"}


def project_sizing(project, *, inverter=None) -> StringSizing:
    """Size strings for a project's module, inverter and design temperatures.

    Parameters
    ----------
    project : layout.project.Project
    inverter : layout.scene.inverter.InverterSpec, keyword-only, optional
        Instead of the project's.

    Returns
    -------
    layout.power.string_sizing.StringSizing
    """
    missing = project.module.missing_electrical()
    if missing:
        raise InputError(f"module.{missing[0]}", "is needed for string sizing: the project's "
                         "module has no electrical data", allowed="the datasheet values of "
                         + ", ".join(missing))
    inverter = inverter if inverter is not None else project.inverter
    if inverter is None:
        raise InputError("inverter", "is needed for string sizing",
                         allowed="an inverter in the project, or an inverter file")
    return size_strings(project.module, inverter, project.strings, mount=project.energy.mount)


@dataclass(frozen=True, eq=False)
class StringingComparison:
    """The stringing options of one evaluation. Computed, never saved.

    Attributes
    ----------
    sizing : layout.power.string_sizing.StringSizing
    plans : dict of str to StringPlan
        By method; ``"project"`` only when the project has strings of its own.
    table : pandas.DataFrame
        One row per method (index ``method``): ``label``, ``strings``, ``modules``,
        ``inputs_used``, ``dc_ac_ratio``, ``energy_kwh``, ``gain_kwh`` and ``gain_pct`` over
        the row stringing (NaN for an option that strings other modules than the rows).
    strings : pandas.DataFrame
        One row per string of every plan: ``method``, ``string`` (label), ``input``
        (1-based), ``face``, ``modules``, ``energy_kwh``, ``longest_link_m``.
    notes : tuple of str
    """

    sizing: StringSizing
    plans: dict
    table: pd.DataFrame
    strings: pd.DataFrame
    notes: tuple[str, ...]

    @property
    def shade_gain_kwh(self) -> float:
        """Annual energy of the shade-aware stringing over the row stringing [kWh]."""
        return float(self.table.loc["shade", "gain_kwh"])

    @property
    def shade_gain_pct(self) -> float:
        """The same gain in % of the row stringing's energy."""
        return float(self.table.loc["shade", "gain_pct"])


def compare_stringing(evaluation, *, inverter=None, methods=STRINGING_METHODS
                      ) -> StringingComparison:
    """Size, string three ways and compare the annual energy of each option.

    Parameters
    ----------
    evaluation : layout.study.analysis.Evaluation
        An evaluation with modules (its irradiance and cell temperatures are used).
    inverter : layout.scene.inverter.InverterSpec, keyword-only, optional
        Instead of the project's.
    methods : sequence of str, keyword-only
        Which of :data:`layout.power.stringing.STRINGING_METHODS`; ``"rows"`` is always
        computed (the gains are over it).

    Returns
    -------
    StringingComparison
    """
    for method in methods:
        if method not in STRINGING_METHODS:
            raise InputError("method", "unknown stringing method", value=method,
                             allowed=", ".join(STRINGING_METHODS))
    project = evaluation.project
    modules = evaluation.modules
    if not modules or evaluation.irradiance is None:
        raise InputError("modules", "the layout has no active modules to string",
                         allowed="at least one module")
    sizing = project_sizing(project, inverter=inverter)
    irr = evaluation.irradiance
    electrical = project.energy.electrical
    spec = project.module
    step = evaluation.weather.step_minutes
    ids = [m.id for m in modules]

    def energy_of(plan):
        return tuple(string_energy_kwh(plan, ids, irr.substring_effective, irr.temp_cell,
                                       spec.power_w, gamma_pdc=electrical.gamma_pdc,
                                       step_minutes=step).tolist())

    rows_plan = string_by_rows(modules, sizing)
    plans = {"rows": replace(rows_plan, energy_kwh=energy_of(rows_plan))}
    notes = []
    if "shade" in methods:
        plans["shade"] = string_by_shade(modules, sizing, irr.substring_effective,
                                         irr.temp_cell, spec.power_w,
                                         gamma_pdc=electrical.gamma_pdc, step_minutes=step,
                                         baseline=plans["rows"])
    if "project" in methods:
        if electrical.strings:
            inputs = project.strings.inputs
            plans["project"] = check_strings(electrical.strings, modules, sizing,
                                             inputs=inputs)
        else:
            notes.append("the project has no strings of its own yet (draw them on the plan)")
    face_of = {m.id: m.face for m in modules}
    rows, per_string = [], []
    for method, plan in plans.items():
        energy = np.asarray(plan.energy_kwh if plan.energy_kwh is not None
                            else energy_of(plan))
        strung = sum(len(s) for s in plan.strings)
        rows.append({"method": method, "label": METHOD_LABELS[method],
                     "strings": len(plan.strings), "modules": strung,
                     "inputs_used": plan.inputs_used, "dc_ac_ratio": sizing.dc_ac_ratio(strung),
                     "energy_kwh": float(energy.sum())})
        for i, string in enumerate(plan.strings):
            per_string.append({"method": method, "string": f"S{i + 1}",
                               "input": plan.inputs[i] + 1, "face": face_of[string[0]],
                               "modules": len(string), "energy_kwh": float(energy[i]),
                               "longest_link_m": plan.links_m[i]})
    table = pd.DataFrame(rows).set_index("method")
    base = table.loc["rows", "energy_kwh"]
    table["gain_kwh"] = table["energy_kwh"] - base
    with np.errstate(invalid="ignore", divide="ignore"):
        table["gain_pct"] = np.where(base > 0, 100.0 * table["gain_kwh"] / base, np.nan)
    # a gain is only a gain over the same modules: the user's strings may hold fewer
    other = table["modules"] != table.loc["rows", "modules"]
    table.loc[other, ["gain_kwh", "gain_pct"]] = np.nan
    for method in table.index[other]:
        notes.append(f"the strings {METHOD_LABELS[method]} hold {table.loc[method, 'modules']} "
                     f"of the {table.loc['rows', 'modules']} modules the rows string: no gain "
                     "is given")
    return StringingComparison(sizing=sizing, plans=plans, table=table,
                               strings=pd.DataFrame(per_string), notes=tuple(notes))


def with_plan(project, plan: StringPlan):
    """Return the project with a plan's strings and inputs as the user's own.

    Parameters
    ----------
    project : layout.project.Project
    plan : layout.power.stringing.StringPlan

    Returns
    -------
    layout.project.Project
        ``energy.electrical.strings`` and ``strings.inputs`` set from the plan.

    Raises
    ------
    InputError
        When the project evaluates with the string model and the plan leaves modules
        unstrung (the string model needs every module in a string).
    """
    electrical = project.energy.electrical
    if plan.unstrung and electrical.shade_model == "string":
        raise InputError("strings", "leave modules in no string, which the string model "
                         "cannot evaluate", value=list(plan.unstrung[:5]),
                         allowed="remove those modules, or another inverter or shade model")
    energy = replace(project.energy, electrical=replace(electrical, strings=plan.strings))
    design = replace(project.strings, inputs=plan.inputs)
    return project.with_changes(energy=energy, strings=design)


def module_string_columns(module_ids, strings, inputs=None) -> pd.DataFrame:
    """Return the ``string`` and ``input`` columns of the module table.

    Parameters
    ----------
    module_ids : sequence of str
        The table's modules, in row order.
    strings : sequence of sequence of str or None
        Module ids of each string.
    inputs : sequence of int, optional
        Tracking input (0-based) of each string.

    Returns
    -------
    pandas.DataFrame
        ``string`` (``"S1"``…, empty text when in no string) and ``input`` (1-based, a
        nullable integer, missing when unknown), indexed like ``module_ids``.
    """
    label, number = {}, {}
    for i, string in enumerate(strings or ()):
        for module_id in string:
            label[module_id] = f"S{i + 1}"
            if inputs is not None and i < len(inputs):
                number[module_id] = inputs[i] + 1
    return pd.DataFrame({"string": [label.get(m, "") for m in module_ids],
                         "input": pd.array([number.get(m) for m in module_ids],
                                           dtype="Int64")})


def evaluation_strings(evaluation):
    """Return the strings an evaluation knows, and their inputs when the user gave them.

    Parameters
    ----------
    evaluation : layout.study.analysis.Evaluation

    Returns
    -------
    strings : tuple of tuple of str or None
        The strings of the string model when it ran (the user's or the automatic ones),
        else the user's strings, else None.
    inputs : tuple of int or None
        The project's ``strings.inputs`` when they belong to these strings.
    """
    project = evaluation.project
    own = project.energy.electrical.strings
    power = evaluation.power
    strings = power.strings if power is not None and power.strings is not None else own
    inputs = project.strings.inputs
    if strings is None or strings != own or inputs is None or len(inputs) != len(strings):
        inputs = None
    return strings, inputs
