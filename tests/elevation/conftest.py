"""Demo tiles of our own scene (layout.elevation.synthetic), written once per test session."""

from __future__ import annotations

import pytest

from layout.elevation import synthetic


@pytest.fixture(scope="session")
def demo_tile(tmp_path_factory):
    """Return a function (rotation_deg, density, seed, suffix, classified) -> (path, scene)."""
    made = {}

    def make(rotation_deg=0.0, density=12.0, seed=1, suffix=".laz", classified=True,
             crs=synthetic.DEMO_CRS):
        key = (rotation_deg, density, seed, suffix, classified, crs)
        if key not in made:
            scene = synthetic.demo_scene(rotation_deg)
            points = synthetic.sample_points(scene, half_size_m=50.0, density=density,
                                             seed=seed)
            path = tmp_path_factory.mktemp("tiles") / f"demo{suffix}"
            synthetic.write_las(path, points, classified=classified, crs=crs)
            made[key] = (path, scene, points)
        return made[key]

    return make



