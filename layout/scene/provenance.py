"""Where an item of the scene came from, when it did not come from the user's own hand.

A project lists its imported items in ``Project.sources``, each source with a note said beside
its items wherever they are shown (plan, report, project file). The note of the one source
the core makes itself, the scene read from elevation data, lives here, apart from the reader
(which loads pyproj and the point-cloud readers), so that the planner and the report can say
it without loading them.
"""

from __future__ import annotations

__all__ = ["PROVENANCE"]

#: What every item imported from elevation data is, for the planner and the project file.
PROVENANCE = "from elevation data, not surveyed"
