"""What the user chooses about a report: paper, the plan's figure, the extras, who prepared it."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from ..errors import InputError, check_whole

__all__ = ["PAPERS", "PLAN_METRICS", "ReportOptions", "paper_for"]

#: Paper sizes [mm] (width, height), portrait. A4 from ISO 216; US Letter is 8.5 × 11 in.
PAPERS = {"a4": (210.0, 297.0), "letter": (215.9, 279.4)}

#: Figures the plan can colour modules by: the module table's column and its label.
PLAN_METRICS = {
    "shade_loss_pct": "annual shade loss [%]",
    "tsrf_pct": "TSRF [%]",
    "solar_access_pct": "solar access [%]",
    "energy_kwh": "annual energy [kWh]",
}


def paper_for(units: str) -> str:
    """Return the paper a site's units suggest: US Letter for imperial, A4 otherwise."""
    return "letter" if units == "imperial" else "a4"


@dataclass(frozen=True)
class ReportOptions:
    """Choices for one report.

    Parameters
    ----------
    paper : {"a4", "letter"} or None, default None
        PDF paper; None picks by the project's units (:func:`paper_for`).
    plan_metric : str, default "shade_loss_pct"
        The figure the plan colours modules by, a key of :data:`PLAN_METRICS`.
    with_range : int or None, default None
        Draws of the survey readings for a 5–95 % shade-loss band (at least 2); None adds no
        band unless one is given to the report.
    with_compare : bool, default False
        Add the portrait-against-landscape comparison.
    preparer, licence : str, default ""
        Who prepared the report and their licence number; left as blanks to fill in by hand.
    report_date : datetime.date or None, default None
        Date printed on the cover; None is today.
    saved : datetime.datetime or None, default None
        When the project file was last saved; None reads the file's modification time (or
        says the project was not saved).
    """

    paper: str | None = None
    plan_metric: str = "shade_loss_pct"
    with_range: int | None = None
    with_compare: bool = False
    preparer: str = ""
    licence: str = ""
    report_date: dt.date | None = None
    saved: dt.datetime | None = None

    def __post_init__(self):
        if self.paper is not None and self.paper not in PAPERS:
            raise InputError("paper", "is not a known paper size", value=self.paper,
                             allowed=", ".join(PAPERS))
        if self.plan_metric not in PLAN_METRICS:
            raise InputError("plan_metric", "is not a figure the plan can show",
                             value=self.plan_metric, allowed=", ".join(PLAN_METRICS))
        if self.with_range is not None:
            check_whole("with_range", self.with_range, 2, 10000,
                        problem="must be a whole number of draws")
        for name in ("preparer", "licence"):
            if not isinstance(getattr(self, name), str):
                raise InputError(name, "must be text", value=getattr(self, name))
