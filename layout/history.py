"""Undo and redo over project versions.

A project is immutable, so a step of history is simply the project as it was after an edit,
with a label saying what the edit was ("moved tree 2", "filled landscape"). Undo moves back one
version, redo forward; a new edit after an undo drops the versions ahead of it, as editors
do. The history remembers which version was last saved, so an editor can say whether the
project has unsaved changes; undoing past a save never touches the saved file.
"""

from __future__ import annotations

from collections import deque
from dataclasses import dataclass

from .errors import InputError, check_whole
from .project import Project

__all__ = ["DEFAULT_STEPS", "ProjectHistory", "Version"]

#: Versions kept behind the current one by default (the issue asks for at least 100).
DEFAULT_STEPS = 200


@dataclass(frozen=True)
class Version:
    """One version of the project and the edit that made it.

    Attributes
    ----------
    project : Project
        The project after the edit.
    label : str
        What the edit was, in words for a button's tooltip ("moved tree 2").
    key : object, optional
        What the edit worked on (``("survey", 2)``); consecutive edits of the same thing are
        one step (see :meth:`ProjectHistory.record`).
    """

    project: Project
    label: str
    key: object = None


class ProjectHistory:
    """The versions of a project, with undo and redo.

    Parameters
    ----------
    project : Project
        The first version (the project as opened or created).
    label : str, default "opened"
        Its label.
    steps : int, default :data:`DEFAULT_STEPS`
        How many versions are kept behind the current one; the oldest go first.
    """

    def __init__(self, project: Project, label: str = "opened", steps: int = DEFAULT_STEPS):
        steps = check_whole("steps", steps, 1, problem="must be a whole number of versions")
        self._back: deque[Version] = deque(maxlen=steps)
        self._ahead: list[Version] = []
        self._current = Version(project, label)
        self._saved: Project | None = None

    # ----------------------------------------------------------------- reading
    @property
    def project(self) -> Project:
        """The current version."""
        return self._current.project

    @property
    def label(self) -> str:
        """What made the current version."""
        return self._current.label

    @property
    def can_undo(self) -> bool:
        """True when there is a version to go back to."""
        return bool(self._back)

    @property
    def can_redo(self) -> bool:
        """True when an undone version can be restored."""
        return bool(self._ahead)

    @property
    def undo_label(self) -> str:
        """What undo would take back ("" when nothing)."""
        return self._current.label if self._back else ""

    @property
    def redo_label(self) -> str:
        """What redo would bring back ("" when nothing)."""
        return self._ahead[-1].label if self._ahead else ""

    @property
    def depth(self) -> tuple[int, int]:
        """Versions behind and ahead of the current one."""
        return len(self._back), len(self._ahead)

    @property
    def unsaved(self) -> bool:
        """True when the current version is not the one last saved (or nothing was saved)."""
        return self._saved is not self._current.project

    # ----------------------------------------------------------------- changing
    def record(self, project: Project, label: str, *, key=None) -> Project:
        """Make ``project`` the current version after an edit called ``label``; returns it.

        Recording the current project again (an edit that changed nothing) adds no step.
        Versions ahead of the current one (undone edits) are dropped. An edit with the same
        ``key`` as the edit just recorded (the fields of one survey entry typed one after
        another) replaces that step rather than adding one, so one undo takes the whole
        entry back.
        """
        if not isinstance(project, Project):
            raise InputError("project", "must be a Project", value=type(project).__name__)
        if project is self._current.project:
            return self._current.project
        merge = key is not None and key == self._current.key and not self._ahead and self._back
        if not merge:
            self._back.append(self._current)
        self._ahead.clear()
        self._current = Version(project, str(label), key)
        return project

    def undo(self) -> Project:
        """Go back one version and return it.

        Raises
        ------
        InputError
            If there is nothing to undo.
        """
        if not self._back:
            raise InputError("undo", "there is nothing to undo")
        self._ahead.append(self._current)
        self._current = self._back.pop()
        return self._current.project

    def redo(self) -> Project:
        """Go forward one undone version and return it.

        Raises
        ------
        InputError
            If nothing was undone since the last edit.
        """
        if not self._ahead:
            raise InputError("redo", "there is nothing to redo")
        self._back.append(self._current)
        self._current = self._ahead.pop()
        return self._current.project

    def mark_saved(self) -> None:
        """Note that the current version is the one in the file now."""
        self._saved = self._current.project
