"""Reference outputs of the zero-lag Butterworth low-pass, from scipy.signal.

Writes tests/fixtures/filter_*.csv, read by tests/signal_filter_scipy.rs. Each file has
`# key=value` header lines (rate_hz, cutoff_hz, corrected, padlen, b, a, library versions), then
columns `x,y`: a noisy synthetic signal and scipy's filtfilt of it, as repr floats (round-trip
exact).

The filter is gravline's (src/signal/butterworth.rs): a 2nd-order Butterworth section designed
at the Winter-corrected frequency f_d = (fs/pi) atan(tan(pi fc/fs) / C), C = (2^(1/2) - 1)^(1/4),
run forward and backward with odd-reflection padding of padlen = round(3 fs / f_3db) samples
(clamped to n - 1), where f_3db = (fs/pi) atan(C tan(pi f_d/fs)) is the dual-pass -3 dB
frequency (equal to fc when corrected).

Run from the repository root: python3 tests/reference/make_filter_fixture.py
"""

import math
import pathlib

import numpy as np
import scipy
from scipy import signal

C = (2.0 ** 0.5 - 1.0) ** 0.25
OUT = pathlib.Path(__file__).resolve().parent.parent / "fixtures"


def design_hz(rate_hz, cutoff_hz, corrected):
    omega_c = math.tan(math.pi * cutoff_hz / rate_hz)
    omega_n = omega_c / C if corrected else omega_c
    return rate_hz / math.pi * math.atan(omega_n)


def pad_len(rate_hz, f_d, n):
    f_3db = rate_hz / math.pi * math.atan(C * math.tan(math.pi * f_d / rate_hz))
    return min(n - 1, round(3.0 * rate_hz / f_3db))


def noisy(rng, rate_hz, n):
    t = np.arange(n) / rate_hz
    smooth = (
        0.3
        + 0.05 * np.sin(2 * np.pi * 0.7 * t)
        + 0.02 * np.sin(2 * np.pi * 2.3 * t + 0.5)
        + 0.004 * np.sin(2 * np.pi * 9.0 * t + 1.0)
        + 0.1 * t
    )
    return smooth + 0.003 * rng.standard_normal(n)


def write(name, rate_hz, cutoff_hz, corrected, x):
    f_d = design_hz(rate_hz, cutoff_hz, corrected)
    b, a = signal.butter(2, f_d / (rate_hz / 2.0), btype="low")
    padlen = pad_len(rate_hz, f_d, len(x))
    y = signal.filtfilt(b, a, x, padtype="odd", padlen=padlen)
    lines = [
        f"# made by tests/reference/make_filter_fixture.py with scipy {scipy.__version__}, "
        f"numpy {np.__version__}",
        f"# rate_hz={rate_hz!r}",
        f"# cutoff_hz={cutoff_hz!r}",
        f"# corrected={'true' if corrected else 'false'}",
        f"# padlen={padlen}",
        "# b=" + " ".join(repr(float(v)) for v in b),
        "# a=" + " ".join(repr(float(v)) for v in a),
        "x,y",
    ]
    lines += [f"{float(xi)!r},{float(yi)!r}" for xi, yi in zip(x, y)]
    path = OUT / name
    path.write_text("\n".join(lines) + "\n")
    print(f"wrote {path} ({len(x)} samples, padlen {padlen})")


def main():
    print(f"scipy {scipy.__version__}, numpy {np.__version__}")
    rng = np.random.default_rng(20240611)
    write("filter_100hz_6hz.csv", 100.0, 6.0, True, noisy(rng, 100.0, 400))
    write("filter_100hz_6hz_uncorrected.csv", 100.0, 6.0, False, noisy(rng, 100.0, 300))
    write("filter_200hz_10hz.csv", 200.0, 10.0, True, noisy(rng, 200.0, 300))
    write("filter_short_run.csv", 100.0, 6.0, True, noisy(rng, 100.0, 30))


if __name__ == "__main__":
    main()
