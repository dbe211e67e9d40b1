"""Assumptions and cautions: the models behind every figure, what only licensed people decide.

The models are named as the evaluation ran them (:class:`layout.power.energy.EnergyOptions`).
The cautions are the README's: fire access defers to the authority having jurisdiction;
structural and electrical work is for licensed people. The preparer's name and licence are
printed as given, or as lines to fill in by hand.
"""

from __future__ import annotations

from .blocks import Paragraph, Section, Table

__all__ = ["CAUTIONS", "assumptions_section", "model_rows"]

_SKY = {"perez": "Perez (pvlib), with circumsolar light shaded with the beam",
        "haydavies": "Hay-Davies (pvlib)", "isotropic": "isotropic sky (pvlib)"}
_IAM = {"physical": "physical (Fresnel and Snell, pvlib iam.physical)",
        "ashrae": "ASHRAE (pvlib iam.ashrae)", None: "none (incidence-angle losses ignored)"}
_SHADE = {"irradiance": "irradiance-only: power follows the shaded irradiance (optimistic for "
                        "hard shadows on part of a module)",
          "module": "bypass diodes with module-level electronics (micro-inverters or "
                    "optimisers)",
          "string": "bypass diodes with a string inverter: a module's shadow also costs its "
                    "string"}

#: The cautions of the README, as the report prints them.
CAUTIONS = (
    "Fire access. The setbacks and pathways are defaults from the code edition named in the "
    "project (for example IFC 2021 §1205). The authority having jurisdiction decides which "
    "edition and which local amendments apply; check with them before a layout is final.",
    "Structure. Added dead load and wind and snow loads need a structural review by a "
    "qualified, licensed person (IRC R324.4; ASCE 7).",
    "Electrical. PV wiring, rapid shutdown and interconnection are licensed electrical work "
    "under NFPA 70 (NEC) Article 690, rapid shutdown in 690.12.",
    "Working on roofs. Residential roof work above 6 ft needs fall protection (OSHA "
    "1926.501(b)(13)). Measure from the ground where you can.",
    "These figures are planning estimates, not a guarantee of yield.",
)


def model_rows(evaluation) -> tuple[tuple[str, str], ...]:
    """Return the models and settings of the evaluation, one (what, which) pair a row."""
    energy = evaluation.project.energy
    electrical = energy.electrical
    basis = evaluation.totals["energy_basis"]
    inverter = (f"AC after an inverter efficiency of {electrical.inverter_efficiency:g}"
                if electrical.inverter_efficiency is not None
                else "DC, before inverter and wiring losses")
    weather = evaluation.weather
    return (
        ("weather", f"{weather.source}, {weather.step_minutes}-minute steps"),
        ("sun position", "pvlib solar position (NREL SPA) at the middle of each step"),
        ("transposition", _SKY.get(energy.sky_model, energy.sky_model)),
        ("incidence angle (IAM)", _IAM.get(energy.iam_model, str(energy.iam_model))),
        ("cell temperature", f"SAPM (King et al. 2004), parameters '{energy.mount}'"),
        ("electrical", f"{_SHADE.get(electrical.shade_model, electrical.shade_model)}; "
                       f"PVWatts DC with γ = {electrical.gamma_pdc:g} /°C"),
        ("energy basis", f"{basis}: {inverter}"),
        ("shade", f"exact ray tests of every obstruction, {energy.samples_per_cell} point(s) "
                  f"per cell; sky-view factors over {energy.sky_directions} directions"),
        ("TOF reference", f"best unshaded plane at the site: tilt "
                          f"{evaluation.best.surface_tilt:.1f}°, azimuth "
                          f"{evaluation.best.surface_azimuth:.1f}°"),
    )


def assumptions_section(evaluation, *, preparer: str = "", licence: str = "") -> Section:
    """Models, cautions and the preparer's fields."""
    blank = "_" * 28
    sign = (("prepared by", preparer or blank), ("licence", licence or blank),
            ("signature and date", blank))
    return Section("assumptions", "Assumptions and cautions", (
        Table(("model", "used"), model_rows(evaluation), caption="Models of the evaluation",
              align="ll", key="models"),
        Paragraph(evaluation.weather.caveat, style="note"),
        *(Paragraph(text) for text in CAUTIONS),
        Table(("", ""), sign, caption="Preparer", align="ll", key="preparer"),
    ), new_page=True)
