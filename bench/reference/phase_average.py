"""numpy reference for bench_phase_average: what a careful researcher writes to
phase-average the same signals (formula for formula as the benchmark: 48 taps
and the angle and three loads, 120,000 samples, a 1.5 Hz pitch) into 360 bins
with mean, std (n - 1), 5th and 95th percentiles and count per bin and column.
The phase comes from the known motion (cycle start at the minimum angle);
partial cycles are left out. Samples are sorted into bins once (argsort), and
each bin's statistics taken over all columns at once. Prints: name, best-of-N
seconds."""
import sys
import time

import numpy as np

repeats = int(sys.argv[1]) if len(sys.argv) > 1 else 3
n, taps, rate, f, bins = 120000, 48, 2000.0, 1.5, 360

t = np.arange(n) / rate
th = 2 * np.pi * f * t
k = np.arange(n)
alpha = 10 + 8 * np.sin(th)
cn = 1 + 0.8 * np.sin(th - 0.2) + 0.1 * np.sin(7.3 * t)
cl = 0.95 * cn
cm = -0.05 * np.sin(th + 0.4) + 0.01 * np.sin(5.1 * t)
j = np.arange(taps)
cp = -np.sin(th[:, None] + 0.05 * j) * (1 + 0.02 * j) + 0.05 * np.sin(0.37 * k[:, None] + j)
origin = 0.75 / f  # first minimum of 10 + 8 sin(2 pi f t)


def phase_average():
    y = np.column_stack([alpha, cn, cl, cm, cp])
    turns = (t - origin) * f
    cycle = np.floor(turns).astype(int)
    complete = (cycle >= 0) & (cycle < int(np.floor((t[-1] - origin) * f)))
    b = np.minimum(((turns - np.floor(turns)) * bins).astype(int), bins - 1)[complete]
    rows = y[complete]
    order = np.argsort(b, kind="stable")
    edges = np.searchsorted(b[order], np.arange(bins + 1))
    rows = rows[order]
    out = {s: np.empty((bins, y.shape[1])) for s in ("mean", "std", "p05", "p95")}
    count = np.empty((bins, y.shape[1]), dtype=int)
    for i in range(bins):
        r = rows[edges[i]:edges[i + 1]]
        out["mean"][i] = r.mean(axis=0)
        out["std"][i] = r.std(axis=0, ddof=1)
        out["p05"][i], out["p95"][i] = np.percentile(r, [5, 95], axis=0)
        count[i] = np.isfinite(r).sum(axis=0)
    return out, count


best = float("inf")
for _ in range(repeats):
    t0 = time.perf_counter()
    phase_average()
    best = min(best, time.perf_counter() - t0)
print(f"PhaseAverage {best:.6f}")
