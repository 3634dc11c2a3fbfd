"""Make tests/fixtures/c3d_python_*.csv: what the general-purpose `c3d` reader from the Python
package index (not a program built for biomechanics) reads from c3d.org's conformance samples,
so that gravline's C3D reader can be checked against it. The samples themselves are read in
place and never copied; the fixtures hold a subsample of the values.

Run from the repository root, in a throw-away virtual environment:
    python3 -m venv /tmp/c3dvenv && /tmp/c3dvenv/bin/pip install c3d numpy
    /tmp/c3dvenv/bin/python tests/reference/make_c3d_fixture.py [SHARED/c3d-samples]
(default: ../shared/c3d-samples, else /work/shared/c3d-samples).

Files (one row per sample file and subsampled frame; floats written with repr(), so they
round-trip exactly; the first line, a `#` comment, names the c3d and numpy versions):
- c3d_python_meta.csv:   file, points, frames, first_frame, point_rate_hz, analog_used,
                         analog_rate_hz, point_scale
- c3d_python_points.csv: file, frame (0-based), point (0-based), x, y, z (POINT:UNITS as
                         stored), valid (1, or 0 when the reader marks the sample invalid);
                         every POINT_STEP-th frame of each file.
- c3d_python_analog.csv: file, sample (0-based, at the analog rate), then one value per channel
                         ((stored - OFFSET) x SCALE x GEN_SCALE, the reader's transform);
                         every ANALOG_STEP-th sample.
"""

import csv
import pathlib
import sys

import c3d
import numpy as np

FILES = [
    "formats-six/Eb015pi.c3d", "formats-six/Eb015pr.c3d", "formats-six/Eb015si.c3d",
    "formats-six/Eb015sr.c3d", "formats-six/Eb015vi.c3d", "formats-six/Eb015vr.c3d",
    "formats-plates/pc_int.c3d", "formats-plates/pc_real.c3d", "formats-plates/sgi_int.c3d",
    "formats-plates/sgi_real.c3d", "formats-plates/dec_int.c3d", "formats-plates/dec_real.c3d",
]
POINT_STEP = {"formats-six": 150, "formats-plates": 30}
ANALOG_STEP = {"formats-six": 120, "formats-plates": 40}

ROOT = pathlib.Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "fixtures"


def samples_dir():
    if len(sys.argv) > 1:
        return pathlib.Path(sys.argv[1])
    for d in [ROOT.parent / "shared" / "c3d-samples", pathlib.Path("/work/shared/c3d-samples")]:
        if d.is_dir():
            return d
    sys.exit("c3d samples not found: give their folder as the first argument")


def main():
    base = samples_dir()
    version = f"# made by tests/reference/make_c3d_fixture.py with c3d {c3d.__version__ if hasattr(c3d, '__version__') else '0.6.0'}, numpy {np.__version__}\n"
    meta_rows, point_rows, analog_rows = [], [], []
    for name in FILES:
        group = name.split("/")[0]
        with open(base / name, "rb") as handle:
            reader = c3d.Reader(handle)
            frames = list(reader.read_frames())
            meta_rows.append([
                name, reader.point_used, len(frames), reader.first_frame,
                repr(float(reader.point_rate)), reader.analog_used,
                repr(float(reader.analog_rate)), repr(float(reader.point_scale)),
            ])
            sample = 0
            for i, (_, points, analog) in enumerate(frames):
                if i % POINT_STEP[group] == 0:
                    for p, row in enumerate(points):
                        valid = 0 if row[3] < 0 else 1
                        point_rows.append([name, i, p] + [repr(float(v)) for v in row[:3]] + [valid])
                # analog: (channels, samples per frame)
                for s in range(analog.shape[1] if analog.size else 0):
                    if sample % ANALOG_STEP[group] == 0:
                        analog_rows.append([name, sample] + [repr(float(v)) for v in analog[:, s]])
                    sample += 1
    for fname, header, rows in [
        ("c3d_python_meta.csv", ["file", "points", "frames", "first_frame", "point_rate_hz",
                                 "analog_used", "analog_rate_hz", "point_scale"], meta_rows),
        ("c3d_python_points.csv", ["file", "frame", "point", "x", "y", "z", "valid"], point_rows),
        ("c3d_python_analog.csv", ["file", "sample", "values..."], analog_rows),
    ]:
        with open(OUT / fname, "w", newline="") as f:
            f.write(version)
            w = csv.writer(f, lineterminator="\n")
            w.writerow(header)
            w.writerows(rows)
        print(f"wrote {OUT / fname}: {len(rows)} rows")


if __name__ == "__main__":
    main()
