"""Time the elevation import on a 1 km² tile of 10 million points, and its peak memory.

The tile is our own demo scene (layout.elevation.synthetic: a hip-roofed house, a chimney,
three trees, a garage) in the middle of 1 km × 1 km of ground, sampled at 10 points/m² and
written as LAZ (and LAS). The target of issue 17: cropped to 60 m about the site and turned
into faces and obstructions in at most 20 s and 2 GB peak.

Each measured step runs in a fresh Python process, so its peak resident memory (``VmHWM`` of
``/proc/self/status``, Linux) is its own:

* ``read whole tile``: ``laspy.read`` of every point (the reference: what a plain reader
  costs on the same file in the same run);
* ``crop 60 m``: :func:`layout.elevation.read_points` alone (chunked, cropped);
* ``import 60 m``: :func:`layout.elevation.import_elevation` (crop, ground, faces, bumps,
  trees, neighbours).

Times are wall-clock, best of ``--repeats``; ratios are against the whole-tile read. Nothing
here is asserted: the tests never time anything.

Run: ``.venv/bin/python benchmarks/elevation.py`` (``--keep DIR`` keeps the tile between runs;
writing it takes about a minute).
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from layout.elevation import synthetic

LAT, LON = synthetic.DEMO_LATITUDE, synthetic.DEMO_LONGITUDE

STEPS = {
    "read whole tile": "import laspy; las = laspy.read({path!r}); n = len(las.x)",
    "crop 60 m": ("from layout.elevation import read_points; "
                  "n = len(read_points({path!r}, site_latitude={lat}, site_longitude={lon}, "
                  "radius_m=60.0))"),
    "import 60 m": ("from layout.elevation import import_elevation; "
                    "s = import_elevation({path!r}, site_latitude={lat}, site_longitude={lon}, "
                    "radius_m=60.0); n = len(s.building.faces) + len(s.obstructions())"),
}

CHILD = """
import json, time
start = time.perf_counter()
{code}
elapsed = time.perf_counter() - start
# VmHWM: this process's own peak resident set (ru_maxrss would carry the parent's over fork)
with open("/proc/self/status") as status:
    peak = next(int(line.split()[1]) for line in status if line.startswith("VmHWM")) / 1024
print(json.dumps({{"s": elapsed, "mb": peak, "n": n}}))
"""


def make_tile(folder: Path, suffix: str) -> Path:
    path = folder / f"tile_10M{suffix}"
    if path.exists():
        return path
    scene = synthetic.demo_scene()
    points = synthetic.sample_points(scene, half_size_m=500.0, density=10.0, seed=7)
    print(f"writing {path.name}: {len(points['x']):,} points", flush=True)
    synthetic.write_las(path, points)
    return path


def run(step: str, path: Path) -> dict:
    code = STEPS[step].format(path=str(path), lat=LAT, lon=LON)
    done = subprocess.run([sys.executable, "-c", CHILD.format(code=code)], capture_output=True,
                          text=True, check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--keep", metavar="DIR", help="keep the tiles in DIR between runs")
    parser.add_argument("--repeats", type=int, default=2)
    args = parser.parse_args()
    folder = Path(args.keep) if args.keep else Path(tempfile.mkdtemp(prefix="eaveline-bench-"))
    folder.mkdir(parents=True, exist_ok=True)
    for suffix in (".laz", ".las"):
        start = time.perf_counter()
        path = make_tile(folder, suffix)
        made = time.perf_counter() - start
        size = path.stat().st_size / 1e6
        print(f"\n{path.name}: {size:,.0f} MB on disk" + (f" (written in {made:.0f} s)"
                                                          if made > 1 else ""))
        print(f"  {'step':<16} {'time s':>7} {'peak MB':>8} {'÷ whole read':>13}")
        reference = None
        for step in STEPS:
            results = [run(step, path) for _ in range(args.repeats)]
            best = min(r["s"] for r in results)
            peak = max(r["mb"] for r in results)
            reference = reference or best
            print(f"  {step:<16} {best:7.2f} {peak:8.0f} {best / reference:13.2f}")
        print("  target (issue 17): import 60 m <= 20 s and <= 2048 MB peak")


if __name__ == "__main__":
    main()
