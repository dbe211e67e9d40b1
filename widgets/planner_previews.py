"""The planner's live previews: while an obstruction is dragged, its figures follow the mouse.

A mixin of :class:`widgets.planner.Planner`. Previews run on a second :class:`Analysis`, on
one day in :attr:`LivePreviews.PREVIEW_SAMPLE_DAYS` of the main analysis's weather, so that a
drag never disturbs the main analysis and each preview costs a fraction of an exact update;
the project itself changes only at the drop, which brings the exact figures. Moves the kernel
handles late (newer ones queued) are skipped, and a drag that ends where it began puts the
project's own figures back.
"""

from __future__ import annotations

import time

from layout.errors import InputError
from layout.project import ProjectFileError
from layout.study.analysis import Analysis

from .message_age import message_age_s
from .plan_scene import plan_scene

__all__ = ["LivePreviews"]


class LivePreviews:
    """The drag callbacks of the planner.

    Reads the planner's ``project``, ``analysis``, ``array_layout``, ``plan`` and
    ``totals_panel``, and shows the project again through its ``set_project``.
    """

    #: Least time between two previews during a drag [s]: previews follow each other as fast
    #: as the analysis goes (screen rate on a house), with a moment between them for the
    #: kernel to take the drop.
    PREVIEW_INTERVAL_S = 0.01
    #: Live previews evaluate one day in this many of the weather (each standing for that
    #: many): about a third of an exact update's time on the demo house, with its shade loss
    #: within about 0.1 point of the exact one; the drop gives the exact figures.
    PREVIEW_SAMPLE_DAYS = 5
    #: A move handled this long [s] after the freshest move of the drag is skipped: the
    #: kernel is behind and newer moves are queued (a busy machine, a slow preview), so the
    #: preview waits for them and the drop does not queue behind stale previews.
    PREVIEW_LATE_S = 0.05
    #: Largest roof [modules] whose previews run on the sampled weather; a larger one
    #: previews exactly on the main analysis.
    SAMPLED_PREVIEW_MODULES = 200
    #: A drag previews only once it has lasted this long [s]: a quick drag goes straight to
    #: its drop, with the kernel free (a preview on the demo takes about 10 ms of the kernel).
    FIRST_PREVIEW_S = 0.15

    def _init_previews(self) -> None:
        """Set the preview settings to their defaults and clear the drag state."""
        self.preview_interval_s = self.PREVIEW_INTERVAL_S
        self.first_preview_s = self.FIRST_PREVIEW_S
        self.preview_sample_days = self.PREVIEW_SAMPLE_DAYS
        self._drag_since = self._preview_done = 0.0
        self._freshest = None  # least age of this drag's moves [s] (message_age_s)
        self._previewing = False  # a preview is being drawn (no loss range bands then)
        self._previewed = False  # the figures shown are a preview's, not the project's
        self._previews = None  # (the weather it was made from, the preview analysis)

    def _obstruction_dragging(self, index: int, x_m: float, y_m: float) -> None:
        if self._behind_the_mouse():
            return  # newer moves are queued: preview where the mouse is, not where it was
        now = time.perf_counter()
        if now - self._drag_since < self.first_preview_s \
                or now - self._preview_done < self.preview_interval_s \
                or not 0 <= index < len(self.project.obstructions):
            return
        try:
            preview, label, place = self._moved_project(index, x_m, y_m)
            analysis = self._preview_analysis()
            if self._previewed and preview == analysis.project:
                return  # the same snapped place again (a browser sends moves in pairs)
            self._busy_since = time.perf_counter()
            analysis.update(preview, remember=False)
        except (InputError, ProjectFileError, OSError, ValueError):
            self._progress_done()
            return  # the figures shown stay; the drop will say what is wrong
        self._progress_done()
        result = analysis.result
        self._previewing = self._previewed = True
        try:
            shown = self.array_layout
            if result.layout is shown or (result.layout.modules == shown.modules
                                          and result.layout.removed == shown.removed):
                # the modules drawn (not a roof-mounted obstruction refilling): recolour them
                self._set_module_figures(redraw=False, result=result)
                self.plan.draw(plan_scene(preview, result.layout, result.areas),
                               units=preview.units, preview=True)
            self.totals_panel.show_totals(result.totals)
            self._show_selected(result)
        finally:
            self._previewing = False
        days = analysis.sample_days
        sample = f" (figures from one day in {days})" if days > 1 else ""
        self._status(f"Preview with {label} at {place}{sample}: drop it to keep it there "
                     "and get the exact figures.", busy=True)
        self._preview_done = time.perf_counter()

    def _preview_analysis(self) -> Analysis:
        """Return the analysis that previews run on.

        On a roof of up to :attr:`SAMPLED_PREVIEW_MODULES` modules, a separate
        :class:`Analysis` on one day in :attr:`preview_sample_days` of the main one's weather,
        made at the first preview: a drag never disturbs the main analysis (its state and its
        recent projects), and each preview costs a fraction of an exact update. On a larger
        roof, where making it would hold up the first preview for seconds, and with
        ``preview_sample_days`` 1, the main analysis itself (exact previews, not kept among
        its recent projects).
        """
        if self.preview_sample_days == 1 \
                or len(self.analysis.result.modules) > self.SAMPLED_PREVIEW_MODULES:
            return self.analysis
        weather = self.analysis.result.weather
        kept = self._previews
        if kept is None or kept[0] is not weather or kept[1].sample_days \
                != self.preview_sample_days:
            analysis = Analysis(self.project, base_dir=self._base_dir, recent=0,
                                sample_days=self.preview_sample_days, weather=weather)
            self._previews = kept = (weather, analysis)
        return kept[1]

    def _behind_the_mouse(self) -> bool:
        """Tell whether the kernel is behind the browser's moves.

        True when the move being handled is older than the freshest move of the drag by more
        than :attr:`PREVIEW_LATE_S`.
        """
        age = message_age_s(self.plan.obstruction_markers)
        if age is None:
            return False
        floor = age if self._freshest is None else min(self._freshest, age)
        self._freshest = floor
        return age - floor > self.PREVIEW_LATE_S

    def _drag_started(self) -> None:
        # the first preview comes first_preview_s into the drag: a quick drag goes straight
        # to its drop, with the kernel free
        self._drag_since = time.perf_counter()
        self._freshest = None  # least age of this drag's moves [s] (message_age_s)

    def _drag_ended(self) -> None:
        if self._previewed:
            # a preview was shown and no drop moved the obstruction: show the project again
            self.set_project(self.project, message="The obstruction stays where it was.",
                             record=False)
