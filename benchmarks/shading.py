"""Time the shading engine on a reference scene of our own and print ratios.

Scene (issue 3): 40 flush-mounted modules (1.0 × 1.7 m, 4 × 4 sample points each) on a 30°
south face, 10 obstructions (6 blocks, 4 trees) around and on the roof, a site at 40° N, sun
hourly for a typical year (only sun-up hours are ray-tested).

Measured in one run, on the same rays, as CPU time (the least of several runs; see
:func:`timed`):

* the engine's full annual computation (``layout.shading.shaded``);
* the engine after moving one obstruction (``ShadeCache.update`` + combine), median;
* trimesh with the Embree backend (``embreex``) on the tessellated scene, if installed;
* a naive per-ray Python loop over the same exact tests, timed on a subset and scaled.

``--big`` runs, in child processes, a 500-module flat roof with 50 obstructions and reports
wall time (the targets' measure), CPU time of all threads and peak resident memory; the ray
tests of several obstructions run on :func:`layout.runtime.worker_threads` threads
(``EAVELINE_THREADS=1`` for one): (a) the sample points of flush modules through the
per-obstruction cache; (b) 500 tilted rack modules through ``module_shade`` with every module
also a shadow caster (550 casters), per cell and substring.

Run: ``.venv/bin/python benchmarks/shading.py [--big]``.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import statistics
import subprocess
import sys
import time

import numpy as np
import shapely

from layout.fill.placed import PlacedModule
from layout.runtime import HUGEPAGE_VARIABLE, hugepage_advice, process_settings, worker_threads
from layout.scene.modules import generic_60_cell
from layout.scene.obstructions import Block, Cylinder, Plate, Tree
from layout.scene.roof import RoofFace
from layout.scene.site import Site
from layout.shading import ShadeCache, module_shade, shaded
from layout.shading.ray_tests import _ray_effect
from layout.sky.sun import sun_above_horizon, typical_year_index

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


def reference_plates(cols=10, rows=4, *, u0=4.0, v0=0.5, width=1.0, length=1.7, gap=0.02,
                     standoff=0.1):
    """The roof face and the 40 modules of the reference scene as plates (shadow casters)."""
    face = RoofFace([(0, 0), (20, 0), (20, 7), (0, 7)], 30.0, 180.0, 5.0, name="south")
    plates = [Plate.from_face(face)]
    for r in range(rows):
        for c in range(cols):
            u, v = u0 + c * (width + gap), v0 + r * (length + gap)
            uv = [(u, v), (u + width, v), (u + width, v + length), (u, v + length)]
            corners = face.roof_to_3d(np.array(uv)) + standoff * face.normal
            plates.append(Plate(corners, kind="module", name=f"r{r}c{c}"))
    return plates


def plate_mesh(plates):
    import trimesh

    tris = []
    for plate in plates:
        origin, e1, e2, _ = plate.frame
        parts = shapely.get_parts(shapely.constrained_delaunay_triangles(plate.plane_polygon))
        for part in parts:
            uv = shapely.get_coordinates(part)[:-1]
            tris.append(origin + uv[:, :1] * e1 + uv[:, 1:] * e2)
    return trimesh.Trimesh(**trimesh.triangles.to_kwargs(np.array(tris)), process=False)


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


def peak_rss_mb() -> float:
    """Peak resident memory of this process [MB]: VmHWM on Linux (reset by exec, unlike
    ru_maxrss, which a child started by fork + exec inherits from its parent)."""
    try:
        with open("/proc/self/status") as status:
            for line in status:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024
    except OSError:
        pass
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def timed(fn, repeat=5):
    """Least CPU time of ``repeat`` runs [s] and the last result.

    CPU time (``time.process_time``), the least of several runs: the machine is shared, and
    both the engine and Embree's ray queries run on one thread (Embree's CPU time equals its
    wall-clock time here), so the ratios compare the same kind of figure.
    """
    times = []
    for _ in range(repeat):
        t0 = time.process_time()
        out = fn()
        times.append(time.process_time() - t0)
    return min(times), out


def main_reference():
    points, obstructions = reference_scene()
    sample = sun_above_horizon(SITE, typical_year_index(SITE))
    sun = sample.vectors
    n_rays = len(sun) * len(points)
    print(f"reference scene: {len(points)} points, {len(obstructions)} obstructions, "
          f"{len(sun)} sun-up hours, {n_rays:,} rays")

    t_full, result = timed(lambda: shaded(points, sun, obstructions))
    print(f"engine, full year:              {t_full * 1e3:8.1f} ms CPU "
          f"(shaded share {result.mean():.3f})")

    cache = ShadeCache(points, sun, obstructions, month=sample.month)
    moves = []
    for k in range(7):
        moved = list(obstructions)
        moved[1] = obstructions[1].translated(0.1 * (k + 1), 0.0)  # drag the chimney
        t0 = time.process_time()
        cache.update(moved)
        combined = cache.shaded()
        moves.append(time.process_time() - t0)
    t_move = statistics.median(moves)
    assert np.array_equal(combined, shaded(points, sun, moved))
    print(f"engine, move one obstruction:   {t_move * 1e3:8.1f} ms   (CPU, median of 7)")

    origins = np.repeat(points[None], len(sun), axis=0).reshape(-1, 3)
    dirs = np.repeat(sun, len(points), axis=0)
    origins = origins + 1e-6 * dirs  # the engine's ray start convention
    try:
        from trimesh.ray.ray_pyembree import RayMeshIntersector
        mesh = tessellate(obstructions)
        caster = RayMeshIntersector(mesh)
        caster.intersects_any(origins[:10], dirs[:10])  # build the BVH outside the timing
        t_embree, hit = timed(lambda: caster.intersects_any(origins, dirs), repeat=3)
        agree = (hit.reshape(len(sun), len(points)) == result).mean()
        print(f"trimesh + Embree, full year:    {t_embree * 1e3:8.1f} ms CPU "
              f"({len(mesh.faces)} triangles, agreement {agree:.4%})")
        print(f"ratio Embree / engine full:      {t_embree / t_full:8.2f}   (target >= 20; "
              f"load {os.getloadavg()[0]:.1f})")
        print(f"ratio engine move / Embree full: {t_move / t_embree:8.3f}   (target <= 0.1)")
        # the same with the roof face and the 40 modules as plate casters. The module points
        # lie in their module's plane, which never shades them (self-shading rule); trimesh
        # and Embree have no such rule and report hits on the triangle a ray starts on, so
        # their rays start 1 mm (the rule's tolerance) along the ray instead of 1 µm.
        import trimesh

        origins_mm = origins + (1e-3 - 1e-6) * dirs

        plates = reference_plates()
        t_plates, with_plates = timed(lambda: shaded(points, sun, [*obstructions, *plates]))
        caster2 = RayMeshIntersector(trimesh.util.concatenate([mesh, plate_mesh(plates)]))
        caster2.intersects_any(origins_mm[:10], dirs[:10])
        t_embree2, hit2 = timed(lambda: caster2.intersects_any(origins_mm, dirs), repeat=3)
        agree2 = (hit2.reshape(len(sun), len(points)) == with_plates).mean()
        print(f"engine, + face and 40 module plates: {t_plates * 1e3:8.1f} ms   "
              f"(shaded share {with_plates.mean():.3f})")
        print(f"trimesh + Embree, same scene:   {t_embree2 * 1e3:8.1f} ms   "
              f"(agreement {agree2:.4%})")
        print(f"ratio Embree / engine, plates:   {t_embree2 / t_plates:8.2f}   (target >= 15)")
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


def rack_modules(spec, cols, rows, *, tilt=10.0, pitch=2.4, x0=2.0, y0=2.0, z0=12.3,
                 gap=0.02):
    """Portrait modules tilted ``tilt`` toward the south in ``rows`` rows on a flat roof."""
    t = np.radians(tilt)
    dy, dz = spec.length_m * np.cos(t), spec.length_m * np.sin(t)
    out = []
    for r in range(rows):
        for c in range(cols):
            x, y = x0 + c * (spec.width_m + gap), y0 + r * pitch
            corners = [(x, y, z0), (x + spec.width_m, y, z0), (x + spec.width_m, y + dy, z0 + dz),
                       (x, y + dy, z0 + dz)]
            out.append(PlacedModule(id=f"flat/r{r}c{c}", face="flat", row=r, column=c,
                                    orientation="portrait",
                                    uv_rect=(x, y, x + spec.width_m, y + dy),
                                    corners_3d=corners, tilt_deg=tilt, azimuth_deg=180.0))
    return out


def big_obstructions(rng):
    """The 50 obstructions of the big flat roof (40 m × 50 m, 12 m high)."""
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
    return obstructions


def main_big():
    # (a) 500 flush modules (25 × 20, 16 points each) on a flat roof, 50 obstructions, hourly
    rng = np.random.default_rng(1)
    face = RoofFace([(0, 0), (40, 0), (40, 50), (0, 50)], 0.0, 180.0, 12.0, name="flat")
    points = module_points(face, 25, 20, u0=2.0, v0=2.0, width=1.0, length=1.7, gap=0.3,
                           standoff=0.3)
    obstructions = big_obstructions(rng)
    sample = sun_above_horizon(SITE, typical_year_index(SITE))
    before = peak_rss_mb()
    t0, cpu0 = time.perf_counter(), time.process_time()
    cache = ShadeCache(points, sample.vectors, obstructions, month=sample.month)
    beam = cache.transmitted()
    elapsed, cpu = time.perf_counter() - t0, time.process_time() - cpu0
    peak = peak_rss_mb()
    print(json.dumps({"case": "flush points", "points": len(points),
                      "obstructions": len(obstructions),
                      "sun_steps": len(sample.vectors), "seconds": round(elapsed, 2),
                      "cpu_seconds": round(cpu, 2), "threads": worker_threads(),
                      "peak_rss_mb": round(peak, 1),
                      "peak_rss_before_mb": round(before, 1),
                      "mean_beam": round(float(beam.mean()), 4)}))


def main_big_racks():
    # (b) 500 tilted rack modules, 60 cells each, every module a caster, module_shade
    rng = np.random.default_rng(1)
    obstructions = big_obstructions(rng)
    spec = generic_60_cell(330.0)
    modules = rack_modules(spec, 25, 20)
    sample = sun_above_horizon(SITE, typical_year_index(SITE))
    before = peak_rss_mb()
    t0, cpu0 = time.perf_counter(), time.process_time()
    result = module_shade(modules, spec, sample.vectors, obstructions, month=sample.month)
    elapsed, cpu = time.perf_counter() - t0, time.process_time() - cpu0
    peak = peak_rss_mb()
    print(json.dumps({"case": "rack modules", "modules": len(modules),
                      "casters": len(obstructions) + len(modules),
                      "points": len(modules) * spec.cell_count,
                      "sun_steps": len(sample.vectors), "seconds": round(elapsed, 2),
                      "cpu_seconds": round(cpu, 2), "threads": worker_threads(),
                      "peak_rss_mb": round(peak, 1),
                      "peak_rss_before_mb": round(before, 1),
                      "shade_arrays_mb": round(sum(
                          a.nbytes for a in (result.mean_rows, result.worst_rows,
                                             result.by_cell, result.substring_rows)
                          if a is not None) / 2**20, 1),
                      "mean_shade": round(float(result.module.mean()), 4)}))


if __name__ == "__main__":
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--big", action="store_true", help="also run the 500-module cases")
    parser.add_argument("--big-child", choices=["points", "racks"], help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.big_child is None:
        process_settings()  # as python -m layout and python -m widgets run (layout/runtime.py)
        print(f"numpy huge-page advice: {'on' if hugepage_advice() else 'off'} "
              f"({HUGEPAGE_VARIABLE}={os.environ.get(HUGEPAGE_VARIABLE)})")
    if args.big_child == "points":
        main_big()
        sys.exit(0)
    if args.big_child == "racks":
        main_big_racks()
        sys.exit(0)
    main_reference()
    if args.big:
        for case in ("points", "racks"):
            out = subprocess.run([sys.executable, __file__, "--big-child", case],
                                 capture_output=True, text=True, check=True)
            data = json.loads(out.stdout.strip().splitlines()[-1])
            print(f"500-module flat roof, {data['case']}: {data['seconds']} s wall "
                  f"({data['cpu_seconds']} s CPU, {data['threads']} threads), peak RSS "
                  f"{data['peak_rss_mb']} MB (targets: <= 3 s, <= 1536 MB; load "
                  f"{os.getloadavg()[0]:.1f}); {data}")
