"""Undo and redo keys over the plan (widgets/undo_keys.py), through the handler as ipyevents
calls it; the real key presses in a browser are in tests/test_browser_roof.py."""

import pytest

from layout import load_demo_project
from widgets import Planner
from widgets.undo_keys import shortcut_action


def key(name, **modifiers):
    return {"type": "keydown", "key": name, **modifiers}


@pytest.mark.parametrize(("event", "action"), [
    (key("z", ctrlKey=True), "undo"),
    (key("z", metaKey=True), "undo"),  # a Mac's command key
    (key("Z", ctrlKey=True, shiftKey=True), "redo"),  # shift gives a capital
    (key("z", metaKey=True, shiftKey=True), "redo"),
    (key("y", ctrlKey=True), "redo"),
    (key("y", metaKey=True), None),  # ⌘Y is not redo on a Mac
    (key("z"), None),
    (key("z", ctrlKey=True, altKey=True), None),
    (key("z", ctrlKey=True, repeat=True), None),  # held down: one step, not a run of them
    ({"type": "keyup", "key": "z", "ctrlKey": True}, None),
    (key("s", ctrlKey=True), None),
])
def test_the_usual_shortcuts_and_nothing_else(event, action):
    assert shortcut_action(event) == action


def test_the_keys_undo_and_redo_the_planners_edits():
    demo = load_demo_project()
    planner = Planner(demo)
    tree = next(i for i, o in enumerate(demo.obstructions) if o.name.startswith("silver maple"))
    kept = tuple(o for i, o in enumerate(demo.obstructions) if i != tree)
    assert planner.set_project(demo.with_changes(obstructions=kept), message="Tree removed.")
    assert len(planner.project.obstructions) == len(demo.obstructions) - 1
    keys = planner.undo_keys
    assert keys.event.source is planner.plan.figure and keys.event.watched_events == ["keydown"]
    assert keys.handle(key("z", ctrlKey=True)) == "undo"
    assert planner.project is demo
    assert keys.handle(key("x", ctrlKey=True)) is None and planner.project is demo
    assert keys.handle(key("y", ctrlKey=True)) == "redo"
    assert len(planner.project.obstructions) == len(demo.obstructions) - 1
    assert "Ctrl+Z" in planner.history_bar.undo_button.tooltip
