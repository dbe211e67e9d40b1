"""The sky over the site: the sun's path and the weather (clear sky or a weather file).

Independent of the roof: everything here depends only on the :class:`~layout.scene.site.Site`
and the time index.
"""
