"""``compare``: portrait, landscape and mixed fills side by side, each also without its worst."""

from __future__ import annotations

from ..study.compare import Comparison, compare_layouts
from .json_output import REPORT_VERSION, plain_json, print_json
from .progress import terminal_progress
from .project_input import load_command_project, with_overrides
from .text import bullets, number, text_table

__all__ = ["comparison_report", "comparison_summary", "run_compare"]


def comparison_report(comparison: Comparison) -> dict:
    """Return the JSON form of ``python -m layout compare --json``.

    Returns
    -------
    dict
        ``{"weather": {"source", "clear_sky", "caveat"}, "limits": {...}, "options":
        [{"name", "orientation", "dropped": [ids], "totals": {...}}, ...]}``.
    """
    weather = comparison.options[0].evaluation.weather
    return plain_json({
        "report_version": REPORT_VERSION,
        "weather": {"source": weather.source, "clear_sky": weather.is_clear_sky,
                    "caveat": weather.caveat},
        "limits": comparison.limits,
        "options": [{"name": o.name, "orientation": o.orientation, "dropped": list(o.dropped),
                     "totals": dict(o.evaluation.totals)} for o in comparison.options],
    })


def comparison_summary(comparison: Comparison) -> str:
    """Return the side-by-side table that ``python -m layout compare`` prints."""
    table = comparison.table
    threshold = table.attrs.get("tsrf_threshold_pct")
    limits = ", ".join(f"{k} {v:g}" for k, v in comparison.limits.items() if v is not None)
    basis = table.attrs.get("energy_basis", "DC")
    rows = [(r.Index, r.modules, r.dropped, f"{r.power_kwp:.2f}",
             number(r.energy_kwh, 0, thousands=True),
             number(r.specific_yield_kwh_per_kwp, 0, thousands=True),
             number(r.shade_loss_pct), number(r.tsrf_mean_pct), r.modules_below_tsrf)
            for r in table.itertuples()]
    below = f"< {threshold:g} % TSRF" if threshold is not None else "below TSRF"
    out = [
        "Layouts side by side (each orientation refilled; \"without the worst\": "
        f"{limits})",
        text_table(("option", "modules", "dropped", "kWp", f"kWh/yr {basis}", "kWh/kWp",
                    "shade loss %", "TSRF mean %", below), rows),
        "",
        "Cautions",
        *bullets([comparison.caveat]),
    ]
    return "\n".join(out)


def run_compare(project: str | None, *, demo: bool = False, weather: str | None = None,
                shade_model: str | None = None,
                orientations: tuple[str, ...] = ("portrait", "landscape", "mixed"),
                keep_worst: bool = False, min_tsrf: float | None = None,
                min_energy: float | None = None, max_shade_loss: float | None = None,
                as_json: bool = False) -> None:
    """Compare the fills of a project and print the table or its JSON form (``compare``).

    Parameters
    ----------
    project, demo, weather, shade_model
        The project file or ``--demo``, and ``--weather`` and ``--shade-model`` in place of
        the project's own: :mod:`layout.cli.project_input` applies them.
    orientations : tuple of str, keyword-only, optional
        The fill orientations compared (``--orientations``).
    keep_worst : bool, keyword-only, optional
        Compare the full fills only (``--keep-worst``).
    min_tsrf : float, keyword-only, optional
        Drop modules with TSRF below this [%] (``--min-tsrf``).
    min_energy : float, keyword-only, optional
        Drop modules with annual energy below this [kWh] (``--min-energy``).
    max_shade_loss : float, keyword-only, optional
        Drop modules with shade loss above this [%] (``--max-shade-loss``).
    as_json : bool, keyword-only, optional
        Print :func:`comparison_report` instead of :func:`comparison_summary` (``--json``).
    """
    loaded, folder = load_command_project(project, demo)
    loaded = with_overrides(loaded, weather=weather, shade_model=shade_model)
    with terminal_progress() as progress:
        comparison = compare_layouts(
            loaded, orientations=orientations, without_worst=not keep_worst,
            min_tsrf_pct=min_tsrf, min_energy_kwh=min_energy,
            max_shade_loss_pct=max_shade_loss, base_dir=folder, progress=progress)
    if as_json:
        print_json(comparison_report(comparison))
    else:
        print(comparison_summary(comparison))
