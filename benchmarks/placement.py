"""Time module placement and print ratios measured in the same run.

Cases (roofs of our own):

* a 50 m² pitched face (10 m eave × 5 m up the slope, 6:12, facing south) under the IFC 2021
  residential setbacks, portrait and landscape, rigid grid and sliding rows;
* a 500 m² flat roof (25 m × 20 m) under the IFC 2021 commercial perimeter, flush fill in both
  orientations and tilted racks (10°, no-shade row pitch at 40° N) in both orientations;
* growth with area: flat roofs of 50, 500 and 5,000 m² with no setbacks (so that the usable
  area grows with the roof), flush portrait grid fill, each time divided by the 50 m² time of
  this run (about linear growth expected: 10× and 100×).

Times are the best of several repeats (``time.perf_counter``). Nothing here is asserted: the
tests never time anything.

Run: ``.venv/bin/python benchmarks/placement.py``.
"""

from __future__ import annotations

import math
import time

from layout.fill.faces import FillOptions, fill_face
from layout.fill.placement import area_bound
from layout.fill.racking import fill_racks, row_pitch_no_shade_window
from layout.fill.rules import ifc_2021_commercial, ifc_2021_residential, no_setbacks
from layout.fill.usable import usable_area
from layout.scene.building import flat_roof
from layout.scene.modules import generic_60_cell
from layout.scene.roof import RoofFace
from layout.units import pitch_from_rise

MODULE = generic_60_cell(330)


def best_of(function, repeats: int = 5) -> tuple[float, int]:
    best, result = math.inf, None
    for _ in range(repeats):
        start = time.perf_counter()
        result = function()
        best = min(best, time.perf_counter() - start)
    return best, len(result)


def pitched_face() -> RoofFace:
    pitch = pitch_from_rise(6)
    depth = 5.0 * math.cos(math.radians(pitch))  # 5 m up the slope, true length
    return RoofFace([(0, 0), (10, 0), (10, depth), (0, depth)], pitch, 180.0, 3.0, name="south")


def flat(area_m2: float, *, setbacks: bool = True):
    length = math.sqrt(area_m2 * 1.25)
    building = flat_roof(length, area_m2 / length, 8.0)
    rules = (ifc_2021_commercial(building_length_m=length, building_width_m=area_m2 / length)
             if setbacks else no_setbacks())
    face = building.faces[0]
    return face, usable_area(face, rules)


def main() -> None:
    print(f"module: {MODULE.length_m} m × {MODULE.width_m} m")
    face = pitched_face()
    usable = usable_area(face, ifc_2021_residential())
    print(f"\n50 m² pitched face (true area {face.true_area_m2:.1f} m², usable "
          f"{usable.area_m2:.1f} m²)")
    for orientation in ("portrait", "landscape"):
        for rows in ("grid", "sliding"):
            seconds, count = best_of(lambda o=orientation, r=rows: fill_face(
                face, usable, MODULE, FillOptions(orientation=o, rows=r)))
            print(f"  {orientation:9s} {rows:7s}: {count:4d} modules in {seconds * 1e3:7.2f} ms"
                  f"  ({count} / {area_bound(usable.area_m2, MODULE)} of the area bound)")

    face, usable = flat(500.0)
    print(f"\n500 m² flat roof (usable {usable.area_m2:.1f} m²)")
    for orientation in ("portrait", "landscape"):
        seconds, count = best_of(lambda o=orientation: fill_face(
            face, usable, MODULE, FillOptions(orientation=o)))
        print(f"  flush {orientation:9s}: {count:4d} modules in {seconds * 1e3:7.2f} ms"
              f"  ({count} / {area_bound(usable.area_m2, MODULE)} of the area bound)")
    for orientation in ("portrait", "landscape"):
        slant = MODULE.length_m if orientation == "portrait" else MODULE.width_m
        pitch = row_pitch_no_shade_window(slant, 10.0, 40.0)
        seconds, count = best_of(lambda o=orientation, p=pitch: fill_racks(
            face, usable, MODULE, tilt_deg=10.0, rack_azimuth_deg=180.0, row_pitch_m=p,
            orientation=o))
        print(f"  racks {orientation:9s}: {count:4d} modules in {seconds * 1e3:7.2f} ms "
              f"(row pitch {pitch:.3f} m)")

    print("\ngrowth with area (flat roof, no setbacks, flush portrait grid), ratio to the 50 m² "
          "time")
    base = None
    for area in (50.0, 500.0, 5000.0):
        face, usable = flat(area, setbacks=False)
        seconds, count = best_of(lambda f=face, u=usable: fill_face(f, u, MODULE),
                                 repeats=5 if area < 5000 else 3)
        base = base or (seconds, count)
        print(f"  {area:7.0f} m²: {count:5d} modules in {seconds * 1e3:8.2f} ms, "
              f"time × {seconds / base[0]:6.1f} (area × {area / 50:5.0f}, modules × "
              f"{count / base[1]:6.1f})")


if __name__ == "__main__":
    main()
