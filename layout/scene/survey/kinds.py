"""The kinds of surveyed object, and the obstruction class each kind builds."""

from __future__ import annotations

from ..obstructions import Block, Cylinder, Tree

__all__ = ["BLOCK_KINDS", "CYLINDER_KINDS", "SURVEY_KINDS", "obstruction_type"]

#: Survey kinds built as a :class:`layout.scene.obstructions.Block` (a rectangle in plan).
BLOCK_KINDS = ("chimney", "wall", "building", "dormer", "block", "other")
#: Survey kinds built as a :class:`layout.scene.obstructions.Cylinder`.
CYLINDER_KINDS = ("pole", "vent", "pipe")
#: Every kind a survey entry may have.
SURVEY_KINDS = ("tree", *BLOCK_KINDS, *CYLINDER_KINDS)


def obstruction_type(kind: str) -> type:
    """Return the :mod:`layout.scene.obstructions` class an entry of ``kind`` builds.

    Parameters
    ----------
    kind : str
        One of :data:`SURVEY_KINDS`.

    Returns
    -------
    type
        :class:`~layout.scene.obstructions.Tree`, :class:`~layout.scene.obstructions.Cylinder`
        or :class:`~layout.scene.obstructions.Block`.
    """
    if kind == "tree":
        return Tree
    return Cylinder if kind in CYLINDER_KINDS else Block
