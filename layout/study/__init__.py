"""Studies over evaluations: the incremental analysis, comparisons, outlooks, portfolios.

:mod:`.analysis` keeps a project's computed state and recomputes only what an edit touched;
the other modules ask it questions: layouts side by side (:mod:`.compare`), shade-loss bands
and growth (:mod:`.outlook`), many projects at once (:mod:`.portfolio`).
"""
