"""Undo and redo buttons over the planner's project versions (layout.history)."""

from __future__ import annotations

from collections.abc import Callable

import ipywidgets as w

from .undo_keys import UNDO_KEYS_HINT

__all__ = ["HistoryBar"]


class HistoryBar(w.HBox):
    """Two buttons, Undo and Redo; each names in its tooltip the edit it would take back.

    The planner owns the :class:`layout.history.ProjectHistory`; this bar only shows whether
    undo and redo are possible and calls back when a button is pressed.
    """

    def __init__(self):
        self.undo_button = w.Button(description="Undo", icon="undo", disabled=True,
                                    layout=w.Layout(width="auto"))
        self.redo_button = w.Button(description="Redo", icon="repeat", disabled=True,
                                    layout=w.Layout(width="auto"))
        self.undo_button.add_class("eaveline-undo")
        self.redo_button.add_class("eaveline-redo")
        self._undo: list[Callable] = []
        self._redo: list[Callable] = []
        self.undo_button.on_click(lambda _: [callback() for callback in self._undo])
        self.redo_button.on_click(lambda _: [callback() for callback in self._redo])
        super().__init__([self.undo_button, self.redo_button],
                         layout=w.Layout(align_items="center"))
        self.add_class("eaveline-history")

    def on_undo(self, callback: Callable) -> None:
        """Call ``callback()`` when Undo is pressed."""
        self._undo.append(callback)

    def on_redo(self, callback: Callable) -> None:
        """Call ``callback()`` when Redo is pressed."""
        self._redo.append(callback)

    def show(self, history) -> None:
        """Enable the buttons that apply to ``history`` and name their edits."""
        behind, _ = history.depth
        self.undo_button.disabled = not history.can_undo
        self.redo_button.disabled = not history.can_redo
        undo = (f"Undo: {history.undo_label} ({behind} step{'s' if behind != 1 else ''} back)"
                if history.can_undo else "Nothing to undo")
        redo = f"Redo: {history.redo_label}" if history.can_redo else "Nothing to redo"
        # one assignment each: a tooltip that does not change sends nothing to the browser
        self.undo_button.tooltip = f"{undo}. Keys: {UNDO_KEYS_HINT}"
        self.redo_button.tooltip = f"{redo}. Keys: {UNDO_KEYS_HINT}"
