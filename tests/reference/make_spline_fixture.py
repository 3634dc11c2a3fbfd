"""Reference natural cubic splines, from scipy.interpolate.CubicSpline(bc_type='natural').

Writes two fixtures read by tests/signal_spline_scipy.rs (values as repr floats, round-trip
exact; the first line names the scipy and numpy versions):

- tests/fixtures/spline_direct.csv: columns `kind,t,y`; rows of kind `knot` are the knots of one
  spline (non-uniform spacing), rows of kind `eval` are the spline evaluated between them.
- tests/fixtures/spline_gapfill.csv: one marker over 60 frames at about 50 Hz (frame times with
  a small jitter), header `# max_gap_s=...`, columns `time_s,x,y,z,fx,fy,fz`: the raw samples
  (empty where missing) and the expected track after gap filling (empty where it stays missing).
  The expected fill follows gravline's rules (src/signal/gapfill.rs): an interior gap of k
  frames lasts k * (t[after] - t[before]) / (k + 1) seconds and is filled when that is at most
  max_gap_s; trial-end gaps are never filled; runs joined by fillable gaps form a stretch, and
  one natural spline per coordinate through all present samples of the stretch fills its gaps.

Run from the repository root: python3 tests/reference/make_spline_fixture.py
"""

import pathlib

import numpy as np
import scipy
from scipy.interpolate import CubicSpline

OUT = pathlib.Path(__file__).resolve().parent.parent / "fixtures"
VERSIONS = f"scipy {scipy.__version__}, numpy {np.__version__}"


def direct():
    rng = np.random.default_rng(7)
    t = np.cumsum(rng.uniform(0.05, 0.4, 12))
    y = np.sin(3.0 * t) + 0.3 * rng.standard_normal(t.size)
    spline = CubicSpline(t, y, bc_type="natural")
    te = np.linspace(t[0], t[-1], 101)
    lines = [f"# made by tests/reference/make_spline_fixture.py with {VERSIONS}", "kind,t,y"]
    lines += [f"knot,{float(a)!r},{float(b)!r}" for a, b in zip(t, y)]
    lines += [f"eval,{float(a)!r},{float(b)!r}" for a, b in zip(te, spline(te))]
    (OUT / "spline_direct.csv").write_text("\n".join(lines) + "\n")


def fill(t, xyz, present, max_gap_s):
    """Expected track after gap filling (NaN where missing), by the rules in the docstring."""
    n = len(t)
    runs = []  # (start, end exclusive) of present samples
    f = 0
    while f < n:
        if present[f]:
            s = f
            while f < n and present[f]:
                f += 1
            runs.append((s, f))
        else:
            f += 1
    out = np.full((n, 3), np.nan)
    i = 0
    while i < len(runs):
        j = i
        while j + 1 < len(runs):
            k = runs[j + 1][0] - runs[j][1]
            duration = k * (t[runs[j + 1][0]] - t[runs[j][1] - 1]) / (k + 1)
            assert abs(duration - max_gap_s) > 1e-3, "keep the fixture clear of the limit"
            if duration > max_gap_s:
                break
            j += 1
        lo, hi = runs[i][0], runs[j][1]
        frames = np.arange(lo, hi)
        known = frames[present[lo:hi]]
        if j > i:
            spline = CubicSpline(t[known], xyz[known], bc_type="natural")
            out[lo:hi] = spline(t[lo:hi])
        out[known] = xyz[known]
        i = j + 1
    return out


def gapfill():
    rng = np.random.default_rng(11)
    n, rate_hz, max_gap_s = 60, 50.0, 0.1
    t = np.arange(n) / rate_hz + rng.uniform(-0.001, 0.001, n)
    xyz = np.column_stack(
        [
            0.2 + 0.1 * np.sin(2 * np.pi * 1.1 * t),
            1.0 + 0.05 * np.cos(2 * np.pi * 0.6 * t) + 0.2 * t,
            0.9 + 0.02 * np.sin(2 * np.pi * 2.0 * t + 0.3),
        ]
    ) + 0.001 * rng.standard_normal((n, 3))
    present = np.ones(n, dtype=bool)
    # trial start, 1 frame, 3 frames, 12 frames (too long), 4 frames, trial end
    for lo, hi in [(0, 2), (8, 9), (15, 18), (30, 42), (47, 51), (58, 60)]:
        present[lo:hi] = False
    out = fill(t, xyz, present, max_gap_s)

    def cell(v):
        return "" if np.isnan(v) else repr(float(v))

    lines = [
        f"# made by tests/reference/make_spline_fixture.py with {VERSIONS}",
        f"# max_gap_s={max_gap_s!r}",
        "time_s,x,y,z,fx,fy,fz",
    ]
    for f in range(n):
        raw = [cell(v) if present[f] else "" for v in xyz[f]]
        lines.append(",".join([repr(float(t[f]))] + raw + [cell(v) for v in out[f]]))
    (OUT / "spline_gapfill.csv").write_text("\n".join(lines) + "\n")


def main():
    print(VERSIONS)
    direct()
    gapfill()
    print(f"wrote {OUT / 'spline_direct.csv'} and {OUT / 'spline_gapfill.csv'}")


if __name__ == "__main__":
    main()
