"""Make tests/fixtures/hull_shapely.csv: random point clouds, their convex hulls and signed
distances of query points to the hull boundary, all computed by shapely (GEOS).

Run from the repository root:  python3 tests/reference/make_hull_fixture.py
Needs: pip install shapely numpy

Rows (`case,kind,x,y,value`), coordinates in metres:
- `point`:  one input point of the cloud (x, y).
- `vertex`: one vertex of shapely's convex hull (closing vertex dropped), in shapely's order.
- `area`:   the hull's area in m^2 (value).
- `query`:  a query point (x, y) and its signed distance to the hull boundary (value):
            shapely's distance to the exterior ring, positive when the polygon contains the
            point, negative outside, 0 on the boundary.
Floats are written with repr(), so they round-trip exactly. The first line, a `#` comment,
names the shapely, GEOS and numpy versions.
"""

import csv
import pathlib
import sys

import numpy as np
import shapely
from shapely.geometry import MultiPoint, Point, Polygon

N_CASES = 30
N_QUERIES = 10
SEED = 20080710

OUT = pathlib.Path(__file__).resolve().parents[1] / "fixtures" / "hull_shapely.csv"


def main() -> None:
    rng = np.random.default_rng(SEED)
    rows = []
    case = 0
    while case < N_CASES:
        n = int(rng.integers(3, 41))
        # foot- to walkway-sized clouds, offset from the origin like lab coordinates
        scale = float(rng.choice([0.05, 0.3, 1.0, 3.0]))
        centre = rng.uniform(-5.0, 5.0, size=2)
        if case % 3 == 0:
            pts = centre + scale * rng.normal(size=(n, 2))
        else:
            pts = centre + scale * rng.uniform(-1.0, 1.0, size=(n, 2))
        hull = MultiPoint([tuple(p) for p in pts]).convex_hull
        if not isinstance(hull, Polygon) or hull.area <= 0.0:
            continue
        ring = list(hull.exterior.coords)[:-1]
        for p in pts:
            rows.append((case, "point", repr(float(p[0])), repr(float(p[1])), ""))
        for v in ring:
            rows.append((case, "vertex", repr(float(v[0])), repr(float(v[1])), ""))
        rows.append((case, "area", "", "", repr(float(hull.area))))

        minx, miny, maxx, maxy = hull.bounds
        pad = 0.5 * max(maxx - minx, maxy - miny)
        inside, outside = [], []
        while len(inside) < N_QUERIES // 2 or len(outside) < N_QUERIES // 2 - 1:
            q = (float(rng.uniform(minx - pad, maxx + pad)), float(rng.uniform(miny - pad, maxy + pad)))
            target = inside if hull.contains(Point(q)) else outside
            if len(target) < (N_QUERIES // 2 if target is inside else N_QUERIES // 2 - 1):
                target.append(q)
        # one query on the boundary: a hull vertex (distance 0)
        queries = inside + outside + [ring[int(rng.integers(len(ring)))]]
        for q in queries:
            pt = Point(q)
            d = hull.exterior.distance(pt)
            signed = d if hull.contains(pt) else -d
            rows.append((case, "query", repr(float(q[0])), repr(float(q[1])), repr(float(signed))))
        case += 1

    OUT.parent.mkdir(parents=True, exist_ok=True)
    with OUT.open("w", newline="") as f:
        f.write(
            f"# made by tests/reference/make_hull_fixture.py with shapely {shapely.__version__} "
            f"(GEOS {shapely.geos_version_string}), numpy {np.__version__}, seed {SEED}\n"
        )
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["case", "kind", "x", "y", "value"])
        w.writerows(rows)
    print(
        f"shapely {shapely.__version__} (GEOS {shapely.geos_version_string}), numpy {np.__version__}, "
        f"python {sys.version.split()[0]}: wrote {len(rows)} rows, {N_CASES} cases to {OUT}"
    )


if __name__ == "__main__":
    main()
