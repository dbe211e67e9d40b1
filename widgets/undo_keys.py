"""Undo and redo from the keyboard while the pointer is over the plan.

A browser gives key presses to whatever has the focus, and a widget sees none of them by
itself; ipyevents forwards them from one widget. It does so while the pointer is over that
widget, and it then keeps the keys for itself (a key typed there does not reach a text field),
so it watches the plan only, never the forms: text fields keep their own undo.
"""

from __future__ import annotations

from collections.abc import Callable

from ipyevents import Event

__all__ = ["UNDO_KEYS_HINT", "UndoKeys", "shortcut_action"]

#: The shortcuts in words, for the buttons' tooltips.
UNDO_KEYS_HINT = "Ctrl+Z / Ctrl+Shift+Z or Ctrl+Y (⌘ on a Mac) with the pointer over the plan"


def shortcut_action(event: dict) -> str | None:
    """Return "undo", "redo" or None for a browser ``keydown`` event (as ipyevents sends it).

    Ctrl+Z (⌘Z on a Mac) undoes; Ctrl+Shift+Z (⌘⇧Z) and Ctrl+Y redo, the usual shortcuts of
    desktop editors. Anything else, and a key held down repeating, is None.
    """
    if event.get("type", "keydown") != "keydown" or event.get("repeat"):
        return None
    key = str(event.get("key", "")).lower()
    command = bool(event.get("ctrlKey") or event.get("metaKey"))
    if not command or event.get("altKey"):
        return None
    if key == "z":
        return "redo" if event.get("shiftKey") else "undo"
    if key == "y" and event.get("ctrlKey") and not event.get("shiftKey"):
        return "redo"
    return None


class UndoKeys:
    """Call ``undo()`` or ``redo()`` on their shortcuts, pressed with the pointer over ``source``.

    Parameters
    ----------
    source : ipywidgets.DOMWidget
        The widget that watches the keys (the plan's figure).
    undo, redo : callable
        Called with no argument on the shortcut.

    Attributes
    ----------
    event : ipyevents.Event
        The widget that forwards the key presses (it has no view of its own: it listens on
        the views of ``source``).
    """

    def __init__(self, source, undo: Callable[[], object], redo: Callable[[], object]):
        self._actions = {"undo": undo, "redo": redo}
        self.event = Event(source=source, watched_events=["keydown"],
                           ignore_modifier_key_events=True)
        self.event.on_dom_event(self.handle)

    def handle(self, event: dict) -> str | None:
        """Run the action ``event`` asks for; return its name (None when it asks for none)."""
        action = shortcut_action(event)
        if action is not None:
            self._actions[action]()
        return action
