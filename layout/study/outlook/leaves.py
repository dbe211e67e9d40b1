"""What leafless months give back: the loss with see-through crowns made opaque and clear.

Part of :mod:`layout.study.outlook`, whose notes say how a sampled project is built and
which year is which.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from ...errors import InputError, check_fields
from ...scene.obstructions import Tree
from .projects import analysis_for, tree_labels, with_surveyed
from .records import float_or_none, frame_from_dict, frame_to_dict, plain_number


# --------------------------------------------------------------------------- leaves
@dataclass(frozen=True, eq=False)
class LeafEffect:
    """Month by month: see-through crowns as modelled, made opaque, and made clear.

    Attributes
    ----------
    monthly : pandas.DataFrame
        Indexed by month 1–12: ``crown_transmittance`` (mean over the see-through crowns)
        [fraction], ``leaf_off`` (True where that mean is above its lowest value of the year),
        ``energy_unshaded_kwh``, then ``energy_kwh`` and ``shade_loss_pct`` as modelled,
        ``energy_opaque_kwh`` and ``shade_loss_opaque_pct`` with those crowns opaque all year,
        ``energy_clear_kwh`` and ``shade_loss_clear_pct`` with them fully transparent (trunks
        and every other obstruction kept).
    trees : tuple of str
        Labels of the see-through crowns (name, or ``tree <position in the scene>``).
    leaf_off_loss_pct, leaf_on_loss_pct : float
        Shade loss over the leaf-off and the leaf-on months, as modelled [%].
    leaf_off_loss_opaque_pct, leaf_on_loss_opaque_pct : float
        The same with the crowns opaque [%].
    energy_gain_kwh : float
        Annual energy as modelled minus with the crowns opaque [kWh/yr]: what the light
        through the crowns gives back.
    """

    monthly: pd.DataFrame
    trees: tuple[str, ...]
    leaf_off_loss_pct: float
    leaf_on_loss_pct: float
    leaf_off_loss_opaque_pct: float
    leaf_on_loss_opaque_pct: float
    energy_gain_kwh: float

    _NUMBERS = ("leaf_off_loss_pct", "leaf_on_loss_pct", "leaf_off_loss_opaque_pct",
                "leaf_on_loss_opaque_pct", "energy_gain_kwh")

    def to_dict(self) -> dict:
        """Plain-data form (lists, floats, text, None); ``leaf_off`` as 1.0 / 0.0."""
        out = {"monthly": frame_to_dict(self.monthly.astype(float)),
               "trees": list(self.trees)}
        out.update({name: plain_number(getattr(self, name)) for name in self._NUMBERS})
        return out

    @classmethod
    def from_dict(cls, data) -> LeafEffect:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("monthly", "trees", *cls._NUMBERS)
        check_fields(data, known, required=known, what="leaf effect")
        monthly = frame_from_dict("monthly", data["monthly"])
        if "leaf_off" not in monthly:
            raise InputError("monthly", "has no leaf_off column")
        monthly["leaf_off"] = monthly["leaf_off"].astype(bool)
        trees = data["trees"]
        if not isinstance(trees, list) or not all(isinstance(t, str) for t in trees):
            raise InputError("trees", "must be a list of text")
        return cls(monthly=monthly, trees=tuple(trees),
                   **{name: float_or_none(name, data[name]) for name in cls._NUMBERS})


def _loss_pct(energy, unshaded) -> float:
    energy, unshaded = float(np.sum(energy)), float(np.sum(unshaded))
    return 100.0 * (1.0 - energy / unshaded) if unshaded > 0 else math.nan


def leaf_effect(project, *, analysis=None, base_dir=None) -> LeafEffect:
    """Compare the loss month by month with see-through crowns as modelled, opaque and clear.

    A see-through crown is a :class:`~layout.scene.obstructions.Tree` with a ``transmittance``
    (a deciduous tree: :meth:`~layout.scene.obstructions.Tree.deciduous`, 0.2 in leaf and 0.6
    leafless after Heisler 1986). Three evaluations through one
    :class:`~layout.study.analysis.Analysis`: as modelled, with those crowns opaque all year (the
    counterfactual of treating deciduous trees as evergreen), and with them fully
    transparent (their trunks still cast shade). Every other obstruction is unchanged.

    Parameters
    ----------
    project : layout.project.Project
        With at least one see-through crown, entered or surveyed.
    analysis : layout.study.analysis.Analysis or None, keyword-only
        An analysis to reuse; it is left holding ``project``. None builds one.
    base_dir : str or os.PathLike, keyword-only, optional
        Folder a relative weather file is read from, when ``analysis`` is None.

    Returns
    -------
    LeafEffect
    """
    flat = with_surveyed(project)
    see_through = [i for i, ob in enumerate(flat.obstructions)
                   if isinstance(ob, Tree) and ob.transmittance is not None]
    if not see_through:
        raise InputError("project.obstructions", "has no tree with a crown transmittance",
                         allowed="a deciduous tree (Tree.deciduous, or deciduous in the survey)")
    labels = dict(tree_labels(flat.obstructions))

    def variant(transmittance):
        obs = list(flat.obstructions)
        for i in see_through:
            obs[i] = replace(obs[i], transmittance=transmittance)
        return flat.with_changes(obstructions=tuple(obs))

    runner = analysis_for(flat, analysis, base_dir)
    monthly = {}
    for key, scene in (("opaque", variant(None)), ("clear", variant((1.0,) * 12)),
                       ("modelled", project)):
        runner.update(scene, remember=scene is project)
        monthly[key] = runner.result.monthly
    mean_t = np.mean([flat.obstructions[i].monthly_transmittance for i in see_through], axis=0)
    leaf_off = mean_t > mean_t.min() + 1e-12
    modelled, opaque, clear = monthly["modelled"], monthly["opaque"], monthly["clear"]
    table = pd.DataFrame({
        "crown_transmittance": mean_t, "leaf_off": leaf_off,
        "energy_unshaded_kwh": modelled["energy_unshaded_kwh"].to_numpy(),
        "energy_kwh": modelled["energy_kwh"].to_numpy(),
        "shade_loss_pct": modelled["shade_loss_pct"].to_numpy(),
        "energy_opaque_kwh": opaque["energy_kwh"].to_numpy(),
        "shade_loss_opaque_pct": opaque["shade_loss_pct"].to_numpy(),
        "energy_clear_kwh": clear["energy_kwh"].to_numpy(),
        "shade_loss_clear_pct": clear["shade_loss_pct"].to_numpy(),
    }, index=pd.RangeIndex(1, 13, name="month"))
    unshaded = table["energy_unshaded_kwh"]
    return LeafEffect(
        monthly=table, trees=tuple(labels[i] for i in see_through),
        leaf_off_loss_pct=_loss_pct(table["energy_kwh"][leaf_off], unshaded[leaf_off]),
        leaf_on_loss_pct=_loss_pct(table["energy_kwh"][~leaf_off], unshaded[~leaf_off]),
        leaf_off_loss_opaque_pct=_loss_pct(table["energy_opaque_kwh"][leaf_off],
                                           unshaded[leaf_off]),
        leaf_on_loss_opaque_pct=_loss_pct(table["energy_opaque_kwh"][~leaf_off],
                                          unshaded[~leaf_off]),
        energy_gain_kwh=float(table["energy_kwh"].sum() - table["energy_opaque_kwh"].sum()))
