"""What the user describes: the site, roof faces and buildings, obstructions, module specs.

The first stage of the flow. Everything here is a plain description checked on construction
(frozen dataclasses raising :class:`layout.errors.InputError`), plus the builders of common
roofs and the survey readings that become obstructions. Nothing here depends on a later stage.
"""
