"""Where modules may go and where they go: usable area, packing, flush fills, rack rows.

The second stage of the flow, in the order its modules build on one another:

- :mod:`.rules`: setback and clearance rules, code-edition presets, the 33 % rule;
- :mod:`.usable`: a face's usable area within its setbacks, clearance rings and pathways;
- :mod:`.placed`: what a fill produces: :class:`~.placed.PlacedModule`, and
  :class:`~.placed.Layout`, the placed modules of a building with the user's removals;
- :mod:`.packing`: equal rectangles in a region: one grid on a fine lattice, or exact rows;
- :mod:`.faces`: :class:`~.faces.FillOptions`; filling one usable area or face, mixed orientation;
- :mod:`.racking`: tilted rack rows on flat faces, row pitch from the GCR or the solstice window;
- :mod:`.placement`: filling a whole building (the stage's entry point) and comparing the
  orientations.

Uses only :mod:`layout.scene` below it.
"""
