"""The shade loss over the system's life as the trees grow: :func:`growth_outlook`.

Part of :mod:`layout.study.outlook`, whose notes say how a sampled project is built and
which year is which.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import pandas as pd

from ...errors import InputError, check_fields, check_range
from ...scene.survey import (
    PROJECTION_YEARS,
    SYSTEM_LIFE_YEARS,
)
from .projects import analysis_for, check_year, project_at_year, tree_labels, with_surveyed
from .records import (
    float_or_none,
    frame_from_dict,
    frame_to_dict,
    layout_figures,
    plain_number,
    whole_number,
)


# --------------------------------------------------------------------------- growth
@dataclass(frozen=True, eq=False)
class GrowthOutlook:
    """Shade loss and energy year by year as the trees grow.

    Attributes
    ----------
    yearly : pandas.DataFrame
        Indexed by ``year``, 0 (as surveyed) to the last year evaluated: ``energy_kwh``,
        ``energy_unshaded_kwh``, ``energy_lost_kwh`` [kWh/yr, after degradation],
        ``shade_loss_pct`` [%] and ``degradation_factor`` [fraction of year-1 output].
    module_loss_pct : pandas.DataFrame
        Shade loss [%] per module (rows, by id) in each year of :attr:`years` (columns).
    module_energy_kwh : pandas.DataFrame
        Energy [kWh/yr] per module in each year of :attr:`years`, after degradation.
    tree_heights_m : pandas.DataFrame
        Height [m] of every tree of the scene (rows, by a label: its name, or
        ``tree <position in the scene>``) as surveyed (column 0) and in each year of
        :attr:`years`; column ``growth_m_per_yr`` holds its rate [m/yr].
    years : tuple of int
        Years reported per module.
    life_years : int
        Years of the system's life summed into the lifetime figures.
    widen_crown : bool
        Whether crowns widened in proportion to the height.
    degradation_pct_per_yr : float
        Module output lost per year, linear [%/yr]; 0 = not modelled.
    lifetime_energy_kwh, lifetime_energy_unshaded_kwh, lifetime_energy_lost_kwh : float
        Sums over years 1 to :attr:`life_years` [kWh].
    lifetime_growth_lost_kwh : float
        The part of :attr:`lifetime_energy_lost_kwh` due to growth: the sum over the years
        of the loss above the year-0 loss (with the same degradation) [kWh].
    """

    yearly: pd.DataFrame
    module_loss_pct: pd.DataFrame
    module_energy_kwh: pd.DataFrame
    tree_heights_m: pd.DataFrame
    years: tuple[int, ...]
    life_years: int
    widen_crown: bool
    degradation_pct_per_yr: float
    lifetime_energy_kwh: float
    lifetime_energy_unshaded_kwh: float
    lifetime_energy_lost_kwh: float
    lifetime_growth_lost_kwh: float

    _FRAMES = ("yearly", "module_loss_pct", "module_energy_kwh", "tree_heights_m")
    _NUMBERS = ("degradation_pct_per_yr", "lifetime_energy_kwh", "lifetime_energy_unshaded_kwh",
                "lifetime_energy_lost_kwh", "lifetime_growth_lost_kwh")

    def to_dict(self) -> dict:
        """Plain-data form (lists, floats, text, None)."""
        out = {name: frame_to_dict(getattr(self, name)) for name in self._FRAMES}
        out.update({"years": list(self.years), "life_years": self.life_years,
                    "widen_crown": self.widen_crown})
        out.update({name: plain_number(getattr(self, name)) for name in self._NUMBERS})
        return out

    @classmethod
    def from_dict(cls, data) -> GrowthOutlook:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = (*cls._FRAMES, "years", "life_years", "widen_crown", *cls._NUMBERS)
        check_fields(data, known, required=known, what="growth outlook")
        if not isinstance(data["years"], list):
            raise InputError("years", "must be a list of whole numbers")
        if not isinstance(data["widen_crown"], bool):
            raise InputError("widen_crown", "must be true or false", value=data["widen_crown"])
        frames = {name: frame_from_dict(name, data[name]) for name in cls._FRAMES}
        numbers = {name: float_or_none(name, data[name]) for name in cls._NUMBERS}
        return cls(**frames, **numbers,
                   years=tuple(check_year(f"years[{i}]", y) for i, y in enumerate(data["years"])),
                   life_years=whole_number("life_years", data["life_years"], 1),
                   widen_crown=data["widen_crown"])




def growth_outlook(project, *, years: Sequence[int] = PROJECTION_YEARS,
                   life_years: int = SYSTEM_LIFE_YEARS, widen_crown: bool = True,
                   degradation_pct_per_yr: float = 0.0, analysis=None, base_dir=None
                   ) -> GrowthOutlook:
    """Project the shade loss over the system's life as every tree grows at its own rate.

    Every year from 0 (as surveyed) to ``max(life_years, max(years))`` is evaluated through
    one :class:`~layout.study.analysis.Analysis` (:func:`project_at_year`; only the growing trees
    are ray-tested again each year, so no interpolation between years is needed). Trees
    without a growth rate, and every other obstruction, stay as they are. Year ``y`` uses the
    trees grown ``y`` years (module notes).

    Parameters
    ----------
    project : layout.project.Project
    years : sequence of int, keyword-only, default (1, 10, 25)
        Years reported per module and per tree, 0 to 100.
    life_years : int, keyword-only, default 25
        Life of the system [years], 1 to 100 (common practice: the power warranty).
    widen_crown : bool, keyword-only, default True
        Crowns widen in proportion to the height (:func:`layout.scene.survey.grown_tree`).
        With False the spheroid crown keeps its radius and base, so it grows slimmer near
        its base, and the loss in some hours can fall as the tree grows.
    degradation_pct_per_yr : float, keyword-only, default 0
        Optional module degradation [%/yr], 0 to 5, linear: year ``y`` yields
        ``1 - rate · (y - 1)`` of year 1, as power warranties are written (common practice:
        about 0.5 %/yr). It scales energy and energy lost alike; the shade loss in percent
        does not change. 0 (the default) leaves degradation out.
    analysis : layout.study.analysis.Analysis or None, keyword-only
        An analysis to reuse; it is left holding ``project`` as surveyed. None builds one.
    base_dir : str or os.PathLike, keyword-only, optional
        Folder a relative weather file is read from, when ``analysis`` is None.

    Returns
    -------
    GrowthOutlook
    """
    years = tuple(check_year(f"years[{i}]", y) for i, y in enumerate(years))
    if not years:
        raise InputError("years", "is empty", allowed="one or more whole numbers 0 to 100")
    life = whole_number("life_years", life_years, 1)
    if life > 100:
        raise InputError("life_years", "is out of range", value=life_years, allowed="1 to 100")
    rate = check_range("degradation_pct_per_yr", degradation_pct_per_yr, 0.0, 5.0,
                       unit="%/yr") / 100.0
    last = max(life, *years)
    flat = with_surveyed(project)
    runner = analysis_for(flat, analysis, base_dir)
    rows, loss, energy = [], {}, {}
    labels = tree_labels(flat.obstructions)
    heights = {label: {"growth_m_per_yr": flat.obstructions[i].growth_m_per_yr}
               for i, label in labels}
    ids = None
    for year in range(last + 1):
        at_year = project_at_year(project, year, widen_crown=widen_crown)
        runner.update(at_year, remember=False)
        result = runner.result
        factor = max(1.0 - rate * (year - 1), 0.0) if year >= 1 else 1.0
        figures = layout_figures(result)
        rows.append({"energy_kwh": figures["energy_kwh"] * factor,
                     "energy_unshaded_kwh": figures["energy_unshaded_kwh"] * factor,
                     "energy_lost_kwh": figures["energy_lost_kwh"] * factor,
                     "shade_loss_pct": figures["shade_loss_pct"],
                     "degradation_factor": factor})
        if ids is None:
            ids = result.table.index
        if year == 0 or year in years:
            for i, label in labels:
                heights[label][year] = at_year.obstructions[i].height
        if year in years:
            loss[year] = result.table["shade_loss_pct"].reindex(ids).to_numpy()
            energy[year] = result.table["energy_kwh"].reindex(ids).to_numpy() * factor
    runner.update(project)
    yearly = pd.DataFrame(rows, index=pd.RangeIndex(last + 1, name="year"))
    wanted = sorted(set(years))
    module_loss = pd.DataFrame({y: loss[y] for y in wanted}, index=ids)
    module_energy = pd.DataFrame({y: energy[y] for y in wanted}, index=ids)
    tree_columns = ["growth_m_per_yr", *sorted({0, *years})]
    tree_heights = pd.DataFrame([[heights[label][c] for c in tree_columns]
                                 for _, label in labels],
                                index=pd.Index([label for _, label in labels], name="tree"),
                                columns=tree_columns, dtype=float)
    span = yearly.loc[1:life]
    lost0 = yearly.loc[0, "energy_lost_kwh"]
    growth_lost = float((span["energy_lost_kwh"] - lost0 * span["degradation_factor"]).sum())
    return GrowthOutlook(
        yearly=yearly, module_loss_pct=module_loss, module_energy_kwh=module_energy,
        tree_heights_m=tree_heights, years=years, life_years=life, widen_crown=widen_crown,
        degradation_pct_per_yr=rate * 100.0,
        lifetime_energy_kwh=float(span["energy_kwh"].sum()),
        lifetime_energy_unshaded_kwh=float(span["energy_unshaded_kwh"].sum()),
        lifetime_energy_lost_kwh=float(span["energy_lost_kwh"].sum()),
        lifetime_growth_lost_kwh=growth_lost)
