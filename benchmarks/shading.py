"""Time the shading engine on a reference scene of our own and print ratios.

Scene (issue 3): 40 flush-mounted modules (1.0 × 1.7 m, 4 × 4 sample points each) on a 30°
south face, 10 obstructions (6 blocks, 4 trees) around and on the roof, a site at 40° N, sun
hourly for a typical year (only sun-up hours are ray-tested).

Measured in one run, on the same rays:

* the engine's full annual computation (``layout.shading.shaded``);
* the engine after moving one obstruction (``ShadeCache.update`` + combine), median;
* trimesh with the Embree backend (``embreex``) on the tessellated scene, if installed;
* a naive per-ray Python loop over the same exact tests, timed on a subset and scaled.

``--big`` runs, in a child process, a 500-module flat roof with 50 obstructions and reports
its wall time and peak resident memory.

Run: ``.venv/bin/python benchmarks/shading.py [--big]``.
"""

from __future__ import annotations

import argparse
import json
import resource
import statistics
import subprocess
import sys
import time

import numpy as np
import shapely

from layout.obstructions import Block, Cylinder, Tree
from layout.roof import RoofFace
from layout.shading import ShadeCache, _ray_effect, shaded
from layout.site import Site
from layout.sun import sun_above_horizon, typical_year_index

SITE = Site(40.0, -105.0, "America/Denver", 1600.0, name="bench")


def module_points(face: RoofFace, cols: int, rows: int, *, u0=0.5, v0=0.5, width=1.0,
                  length=1.7, gap=0.02, grid=4, standoff=0.1) -> np.ndarray:
    """Sample points (grid × grid per module) of a portrait array, lifted off the face."""
    offsets = (np.arange(grid) + 0.5) / grid
    pts = []
    for r in range(rows):
        for c in range(cols):
            u = u0 + c * (width + gap) + offsets * width
            v = v0 + r * (length + gap) + offsets * length
            uu, vv = np.meshgrid(u, v)
            pts.append(face.roof_to_3d(np.column_stack([uu.ravel(), vv.ravel()])))
    return np.vstack(pts) + standoff * face.normal


def reference_scene():
    face = RoofFace([(0, 0), (20, 0), (20, 7), (0, 7)], 30.0, 180.0, 5.0, name="south")
    points = module_points(face, 10, 4, u0=4.0)
    ridge = face.ridge_height_m
    obstructions = [
        Block([(0, 0), (20, 0), (20, 14), (0, 14)], 5.0, kind="building", name="house"),
        Block([(15.0, 4.0), (15.8, 4.0), (15.8, 4.8), (15.0, 4.8)], ridge + 1.0, 5.0,
              kind="chimney"),
        Block([(1.0, 1.5), (3.0, 1.5), (3.0, 5.0), (1.0, 5.0)], 8.5, 5.0, kind="dormer"),
        Block([(24.0, -10.0), (34.0, -10.0), (34.0, 2.0), (24.0, 2.0)], 9.0, kind="building"),
        Block([(-5.0, -6.0), (18.0, -6.0), (18.0, -5.8), (-5.0, -5.8)], 2.0, kind="wall"),
        Block([(-9.0, -12.0), (-4.0, -12.0), (-4.0, -9.0), (-6.0, -9.0), (-6.0, -7.0),
               (-9.0, -7.0)], 3.5, kind="building", name="L-shaped shed"),
        Tree.deciduous((8.0, -12.0), 12.0, 3.5, 4.0, name="maple"),
        Tree.deciduous((16.0, -16.0), 14.0, 4.0, 5.0, name="oak"),
        Tree((-6.0, -3.0), 15.0, 2.5, 2.0, crown_shape="cone", name="spruce"),
        Tree((27.0, 8.0), 10.0, 3.0, 3.0, name="elm"),
    ]
    return points, obstructions


def tessellate(obstructions, sections=64, subdivisions=3):
    import trimesh

    meshes = []

    def cylinder(center, radius, base, top):
        mesh = trimesh.creation.cylinder(radius=radius, height=top - base, sections=sections)
        mesh.apply_translation([center[0], center[1], 0.5 * (base + top)])
        meshes.append(mesh)

    for ob in obstructions:
        if isinstance(ob, Block):
            ring = np.asarray(ob.footprint)
            n = len(ring)
            index = {tuple(p): i for i, p in enumerate(ring.tolist())}
            faces = []
            tris = shapely.get_parts(shapely.constrained_delaunay_triangles(ob.footprint_polygon))
            for tri in tris:
                ids = [index[tuple(p)] for p in shapely.get_coordinates(tri)[:-1].tolist()]
                faces += [ids, [i + n for i in ids]]
            for i in range(n):
                j = (i + 1) % n
                faces += [[i, j, j + n], [i, j + n, i + n]]
            verts = np.vstack([np.column_stack([ring, np.full(n, ob.base)]),
                               np.column_stack([ring, np.full(n, ob.top)])])
            meshes.append(trimesh.Trimesh(verts, np.array(faces), process=False))
        elif isinstance(ob, Cylinder):
            cylinder(ob.center, ob.radius, ob.base, ob.top)
        else:
            if ob.crown_base > 0:
                cylinder(ob.center, ob.trunk_radius, 0.0, ob.crown_base)
            if ob.crown_shape == "cone":
                mesh = trimesh.creation.cone(radius=ob.crown_radius,
                                             height=ob.height - ob.crown_base, sections=sections)
                mesh.apply_translation([*ob.center, ob.crown_base])
            else:
                mesh = trimesh.creation.icosphere(subdivisions=subdivisions)
                mesh.apply_scale([ob.crown_radius, ob.crown_radius, ob.crown_semi_axis_z])
                mesh.apply_translation([*ob.center, ob.crown_center_z])
            meshes.append(mesh)
    return trimesh.util.concatenate(meshes)


def timed(fn, repeat=3):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times), out


def main_reference():
    points, obstructions = reference_scene()
    sample = sun_above_horizon(SITE, typical_year_index(SITE))
    sun = sample.vectors
    n_rays = len(sun) * len(points)
    print(f"reference scene: {len(points)} points, {len(obstructions)} obstructions, "
          f"{len(sun)} sun-up hours, {n_rays:,} rays")

    t_full, result = timed(lambda: shaded(points, sun, obstructions))
    print(f"engine, full year:              {t_full * 1e3:8.1f} ms   "
          f"(shaded share {result.mean():.3f})")

    cache = ShadeCache(points, sun, obstructions, month=sample.month)
    moves = []
    for k in range(7):
        moved = list(obstructions)
        moved[1] = obstructions[1].translated(0.1 * (k + 1), 0.0)  # drag the chimney
        t0 = time.perf_counter()
        cache.update(moved)
        combined = cache.shaded()
        moves.append(time.perf_counter() - t0)
    t_move = statistics.median(moves)
    assert np.array_equal(combined, shaded(points, sun, moved))
    print(f"engine, move one obstruction:   {t_move * 1e3:8.1f} ms   (median of 7)")

    origins = np.repeat(points[None], len(sun), axis=0).reshape(-1, 3)
    dirs = np.repeat(sun, len(points), axis=0)
    origins = origins + 1e-6 * dirs  # the engine's ray start convention
    try:
        from trimesh.ray.ray_pyembree import RayMeshIntersector
        mesh = tessellate(obstructions)
        caster = RayMeshIntersector(mesh)
        caster.intersects_any(origins[:10], dirs[:10])  # build the BVH outside the timing
        t_embree, hit = timed(lambda: caster.intersects_any(origins, dirs), repeat=2)
        agree = (hit.reshape(len(sun), len(points)) == result).mean()
        print(f"trimesh + Embree, full year:    {t_embree * 1e3:8.1f} ms   "
              f"({len(mesh.faces)} triangles, agreement {agree:.4%})")
        print(f"ratio Embree / engine full:      {t_embree / t_full:8.2f}   (target >= 5)")
        print(f"ratio engine move / Embree full: {t_move / t_embree:8.3f}   (target <= 0.1)")
    except ImportError:
        print("trimesh + Embree: embreex not installed, skipped")

    rng = np.random.default_rng(0)
    subset = rng.choice(n_rays, 2000, replace=False)

    def naive():
        out = np.zeros(len(subset), dtype=bool)
        for i, r in enumerate(subset):
            o, d = origins[r:r + 1] - 1e-6 * dirs[r:r + 1], dirs[r:r + 1]
            for ob in obstructions:
                opaque, crown = _ray_effect(ob, o, d, 1e-6)
                if opaque[0] or crown[0]:
                    out[i] = True
                    break
        return out

    t_naive_sub, naive_hits = timed(naive, repeat=1)
    assert np.array_equal(naive_hits, result.ravel()[subset])
    t_naive = t_naive_sub * n_rays / len(subset)
    print(f"naive per-ray loop (scaled from 2000 rays): {t_naive:8.1f} s")
    print(f"ratio naive / engine full:      {t_naive / t_full:8.0f}")
    print(f"move-one target (<= 100 ms):     {'met' if t_move <= 0.1 else 'MISSED'}")


def main_big():
    # 500 modules (25 × 20) on a flat roof, 50 obstructions, hourly year
    rng = np.random.default_rng(1)
    face = RoofFace([(0, 0), (40, 0), (40, 50), (0, 50)], 0.0, 180.0, 12.0, name="flat")
    points = module_points(face, 25, 20, u0=2.0, v0=2.0, width=1.0, length=1.7, gap=0.3,
                           standoff=0.3)
    obstructions = [Block([(0, 0), (40, 0), (40, 50), (0, 50)], 12.0, kind="building")]
    for _ in range(25):
        x, y = rng.uniform(0, 38, 2)
        obstructions.append(Block([(x, y), (x + 1, y), (x + 1, y + 1), (x, y + 1)],
                                  12.0 + rng.uniform(0.5, 2.0), 12.0, kind="vent"))
    for _ in range(12):
        x, y = rng.uniform(-5, 45, 2)
        obstructions.append(Cylinder((x, y), rng.uniform(0.05, 0.3), 12.0 + rng.uniform(0.3, 1),
                                     12.0, kind="pipe"))
    for _ in range(12):
        x, y = rng.uniform(-30, 70), rng.uniform(-30, -5)
        obstructions.append(Tree.deciduous((x, y), rng.uniform(8, 20), rng.uniform(2, 5), 3.0))
    sample = sun_above_horizon(SITE, typical_year_index(SITE))
    before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    t0 = time.perf_counter()
    cache = ShadeCache(points, sample.vectors, obstructions, month=sample.month)
    beam = cache.transmitted()
    elapsed = time.perf_counter() - t0
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    print(json.dumps({"points": len(points), "obstructions": len(obstructions),
                      "sun_steps": len(sample.vectors), "seconds": round(elapsed, 2),
                      "peak_rss_mb": round(peak / 1024, 1),
                      "peak_rss_before_mb": round(before / 1024, 1),
                      "mean_beam": round(float(beam.mean()), 4)}))


if __name__ == "__main__":
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--big", action="store_true", help="also run the 500-module case")
    parser.add_argument("--big-child", action="store_true", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.big_child:
        main_big()
        sys.exit(0)
    main_reference()
    if args.big:
        out = subprocess.run([sys.executable, __file__, "--big-child"], capture_output=True,
                             text=True, check=True)
        data = json.loads(out.stdout.strip().splitlines()[-1])
        print(f"500-module flat roof, 50 obstructions: {data['seconds']} s, peak RSS "
              f"{data['peak_rss_mb']} MB (targets: <= 10 s, <= 2048 MB); {data}")
