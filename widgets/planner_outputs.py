"""The planner's loss range over the survey's tolerances and its shade report.

A mixin of :class:`widgets.planner.Planner`: both reuse the planner's own analysis.
"""

from __future__ import annotations

import time
from pathlib import Path

from layout.errors import InputError
from layout.project import ProjectFileError
from layout.report import ReportOptions, write_report
from layout.study.outlook import shade_loss_range

from .loss_band import module_bands, range_key

__all__ = ["LossRangeAndReport"]


class LossRangeAndReport:
    """The loss range and the report of the planner.

    Reads the planner's ``project``, ``analysis``, ``loss_panel`` and ``status_line`` and calls
    its figures' redraw methods.
    """

    # ----------------------------------------------------------------- loss range
    def _range_current(self) -> bool:
        return self.loss_range is not None and self._range_key == range_key(self.project)

    def _module_bands(self) -> dict:
        """Shade loss range [%] (low, high) per module id, when the loss range is current."""
        if self._previewing or not self._range_current():
            return {}
        return module_bands(self.loss_range)

    def _show_band(self) -> None:
        self.loss_panel.show(self.loss_range, current=self._range_current(),
                             surveyed=bool(self.project.survey))

    def run_loss_range(self, *, samples: int | None = None, seed: int | None = ...):
        """Carry the survey tolerances to the shade loss and show the band.

        Runs :func:`layout.study.outlook.shade_loss_range` on the planner's analysis (it is left
        holding the project shown), with the progress line counting the draws.

        Parameters
        ----------
        samples : int, keyword-only, optional
            Draws of the readings, at least 2; default the "Draws" box.
        seed : int or None, keyword-only, optional
            Seed of the generator; default the "Seed" box.

        Returns
        -------
        layout.study.outlook.ShadeLossRange or None
            None when the project has no survey or the core refused.
        """
        p = self.project
        if not p.survey:
            self._show_band()
            self._status("A loss range needs surveyed obstructions (Survey tab).")
            return None
        samples = self.loss_panel.range_samples.value if samples is None else samples
        seed = self.loss_panel.range_seed.value if seed is ... else seed

        def progress(done: int, total: int) -> None:
            self.status_line.show_progress(done, total)
            what = f"draw {done + 1} of {total - 1}" if done < total - 1 else "the nominal readings"
            self._status(f"Loss range: {what}…", busy=True)

        start = time.perf_counter()
        try:
            band = shade_loss_range(p, samples=samples, seed=seed, analysis=self.analysis,
                                    progress=progress)
        except (InputError, ProjectFileError, OSError, ValueError) as err:
            self.analysis.update(p)  # back to the project shown
            self._progress_done()
            self._status(f"No loss range: {err}", error=True)
            return None
        self._progress_done()
        self.loss_range, self._range_key = band, range_key(p)
        self._show_band()
        self._set_module_figures()
        self._show_selected()
        self._status(f"Loss range over {band.samples} draws (seed {band.seed}) in "
                     f"{time.perf_counter() - start:.1f} s.")
        return band

    def write_report(self, path=None, *, options: ReportOptions | None = None) -> Path:
        """Write the shade report of the project shown (:func:`layout.report.write_report`).

        The report reuses the planner's analysis and, when it is current, its loss range;
        the status line shows the progress.

        Parameters
        ----------
        path : str or pathlib.Path, optional
            ``.pdf`` or ``.html``; default the File tab's report path.
        options : layout.report.ReportOptions, keyword-only, optional

        Returns
        -------
        pathlib.Path
            The file written.
        """
        path = self.file_panel.report_path.value if path is None else path

        def progress(label: str, done: int, total: int) -> None:
            self.status_line.show_progress(done, total)
            self._status(f"Report: {label}…", busy=True)

        source = Path(self.file_panel.project_path.value).expanduser()
        self._status("Writing the report…", busy=True)
        try:
            written = write_report(self.project, path, options=options, analysis=self.analysis,
                                   base_dir=self._base_dir,
                                   source=source if source.is_file() else None,
                                   loss_range=self.loss_range if self._range_current() else None,
                                   progress=progress)
        except Exception as err:
            self.analysis.update(self.project)  # back to the project shown
            self._status(f"No report: {err}", error=True)
            raise
        finally:
            self._progress_done()
        self._status(f"Report written: {written}")
        return written

