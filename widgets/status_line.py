"""The planner's status line: a progress bar for long recomputes beside one line of text."""

from __future__ import annotations

import html

import ipywidgets as w

__all__ = ["StatusLine"]


class StatusLine(w.HBox):
    """One line saying what the planner does or did, with a progress bar while it works.

    Attributes
    ----------
    progress : ipywidgets.IntProgress
        Stages (or draws) done; hidden unless a long task is running.
    message : ipywidgets.HTML
        The line of text.
    """

    def __init__(self):
        self.message = w.HTML()
        self.message.add_class("eaveline-status")
        self.progress = w.IntProgress(value=0, min=0, max=8, bar_style="",
                                      layout=w.Layout(width="160px", visibility="hidden"))
        self.progress.add_class("eaveline-progress")
        super().__init__([self.progress, self.message], layout=w.Layout(align_items="center"))

    def say(self, text: str, *, busy: bool = False, error: bool = False) -> None:
        """Show ``text``: teal while busy, red for an error, grey otherwise."""
        colour = "#8a2d2d" if error else ("#2b7c79" if busy else "#5d6b6a")
        self.message.value = (f"<span style='color:{colour};font-size:12px'>"
                              f"{html.escape(text)}</span>")

    def show_progress(self, done: int, total: int) -> None:
        """Show the bar at ``done + 1`` of ``total`` steps."""
        with self.progress.hold_sync():
            self.progress.max = total
            self.progress.value = done + 1
            self.progress.layout.visibility = "visible"

    def hide_progress(self) -> None:
        """Hide the bar (the task is over)."""
        self.progress.layout.visibility = "hidden"
