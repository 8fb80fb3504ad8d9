"""numpy/scipy reference for bench_piv_vortex: the same fields, swirl strength
from numpy.gradient (second-order central differences), vorticity noise by
the median absolute deviation, 8-connected regions by scipy.ndimage.label,
swirl-weighted centroids and circulation, and nearest-neighbour tracking.
It runs 400 of the 2,000 frames and scales the time by 5 (per-frame work is
the same). Prints: name, seconds for 2,000 frames (same value for both cases)."""
import sys
import time

import numpy as np
from scipy import ndimage

NX, NY, FRAMES, DISTINCT, RUN = 160, 120, 2000, 100, 400
x = 0.002 * np.arange(NX)
y = 0.002 * np.arange(NY)
X, Y = np.meshgrid(x, y)
P = np.arange(NX * NY, dtype=float).reshape(NY, NX)


def lamb_oseen(x0, y0, gamma, rc):
    dx, dy = X - x0, Y - y0
    r2 = dx * dx + dy * dy
    with np.errstate(invalid="ignore", divide="ignore"):
        f = np.where(r2 > 0, gamma / (2 * np.pi * r2) * -np.expm1(-r2 / rc**2), 0.0)
    return -f * dy, f * dx


frames = []
for k in range(DISTINCT):
    u = np.full((NY, NX), 10.0)
    v = np.zeros((NY, NX))
    for w in [(0.05 + 0.002 * k, 0.12, -0.4, 0.008), (0.20, 0.05, 0.3, 0.006), (0.28, 0.18, -0.2, 0.01)]:
        du, dv = lamb_oseen(*w)
        u += du
        v += dv
    u += 0.05 * np.sin(0.7 * P + 1.3 * k) * np.cos(0.13 * P)
    v += 0.05 * np.cos(0.9 * P + 0.7 * k) * np.sin(0.11 * P)
    frames.append((u.astype(np.float32), v.astype(np.float32)))

structure = np.ones((3, 3), dtype=int)
area = 0.002 * 0.002


def detect(u, v):
    uy, ux = np.gradient(u.astype(float), y, x)
    vy, vx = np.gradient(v.astype(float), y, x)
    w = vx - uy
    disc = ux * vy - uy * vx - (0.5 * (ux + vy)) ** 2
    lam = np.sqrt(np.maximum(disc, 0.0))
    noise = 0.5 * 1.4826 * np.median(np.abs(w - np.median(w)))
    out = []
    for sign in (1, -1):
        mask = (lam > 3 * noise) & (sign * w > 0)
        labels, n = ndimage.label(mask, structure=structure)
        if n == 0:
            continue
        idx = np.arange(1, n + 1)
        cells = ndimage.sum(mask, labels, idx)
        wsum = ndimage.sum(lam, labels, idx)
        cx = ndimage.sum(lam * X, labels, idx) / wsum
        cy = ndimage.sum(lam * Y, labels, idx) / wsum
        circ = ndimage.sum(w, labels, idx) * area
        for c, a, b, g in zip(cells, cx, cy, circ):
            if c >= 4:
                out.append((sign, a / 0.2, b / 0.2, g))
    return out


def track(per_frame, gate=0.1):
    live, done = [], []
    for k, dets in enumerate(per_frame):
        taken = set()
        for t in live:
            best, bd = None, gate
            for i, d in enumerate(dets):
                if i in taken or d[0] != t["sign"]:
                    continue
                dist = np.hypot(d[1] - t["x"], d[2] - t["y"])
                if dist <= bd:
                    best, bd = i, dist
            if best is None:
                t["miss"] += 1
            else:
                taken.add(best)
                t.update(x=dets[best][1], y=dets[best][2], miss=0)
                t["n"] += 1
        done += [t for t in live if t["miss"] > 2]
        live = [t for t in live if t["miss"] <= 2]
        live += [dict(sign=d[0], x=d[1], y=d[2], miss=0, n=1) for i, d in enumerate(dets) if i not in taken]
    return done + live


repeats = int(sys.argv[1]) if len(sys.argv) > 1 else 2
best = float("inf")
for _ in range(repeats):
    t0 = time.perf_counter()
    per_frame = [detect(*frames[k % DISTINCT]) for k in range(RUN)]
    track(per_frame)
    best = min(best, time.perf_counter() - t0)
seconds = best * FRAMES / RUN
print(f"PivVortex1Thread {seconds:.6f}")
print(f"PivVortex2Threads {seconds:.6f}")
