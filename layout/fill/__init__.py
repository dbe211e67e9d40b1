"""Where modules may go and where they go: usable area, flush fills, rack rows.

The second stage of the flow. :mod:`.clearance` turns a face and the setback and clearance
rules into its usable area; :mod:`.placement` fills pitched faces and holds the resulting
:class:`~layout.fill.placement.Layout`; :mod:`.racking` lays tilted rows on flat faces. Uses
only :mod:`layout.scene` below it.
"""
