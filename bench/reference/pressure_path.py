"""numpy/scipy reference for bench_pressure_path: what a careful researcher
writes for the same steps on the same files (pressure_daq.h5, pressure_taps.csv,
pressure_cal.toml, pressure_encoder.toml written by the benchmark): linear
calibrations, wind-off zeros interpolated in time, Bergh-Tijdeman tubing
correction by FFT below each line's usable bandwidth, Cp on the wind-on span,
contour-integrated Cn, Cc, Cm. Prints one line per case: name, best-of-N seconds."""
import csv
import os
import sys
import time
import tomllib

import h5py
import numpy as np
import scipy.fft
import scipy.special as sp

d = os.environ.get("STALLSCOPE_BENCH_DIR", "/tmp/stallscope-bench")
repeats = int(sys.argv[1]) if len(sys.argv) > 1 else 3
gamma, pr = 1.4, 0.71
T, P = 293.15, 101325.0
R_air = 287.05287
rho, mu, a0 = P / (R_air * T), 1.458e-6 * T**1.5 / (T + 110.4), np.sqrt(gamma * R_air * T)


def tube_response(L, radius, volume, f):
    w = 2 * np.pi * np.asarray(f, dtype=float)
    w = np.where(w == 0, 1e-12, w)
    alpha = 1j ** 1.5 * radius * np.sqrt(rho * w / mu)
    n = 1 / (1 + (gamma - 1) / gamma * sp.jv(2, alpha * np.sqrt(pr)) / sp.jv(0, alpha * np.sqrt(pr)))
    phi = w / a0 * np.sqrt(sp.jv(0, alpha) / sp.jv(2, alpha)) * np.sqrt(gamma / n)
    vt = np.pi * radius**2 * L
    return 1 / (np.cosh(phi * L) + volume / vt * (1 / gamma) * n * phi * L * np.sinh(phi * L))


def reduce():
    with h5py.File(os.path.join(d, "pressure_daq.h5"), "r") as f:
        t = f["/daq/time_s"][()]
        v = f["/daq/volts"][()]
        names = [n.decode() if isinstance(n, bytes) else n for n in f["/daq/volts"].attrs["channels"]]
    assert np.all(np.diff(t) > 0) and np.isfinite(v).all()
    rate = 1 / np.median(np.diff(t))
    col = {n: i for i, n in enumerate(names)}
    cal = tomllib.load(open(os.path.join(d, "pressure_cal.toml"), "rb"))["channels"]
    enc = tomllib.load(open(os.path.join(d, "pressure_encoder.toml"), "rb"))["channels"]["alpha_enc"]
    taps = list(csv.DictReader(open(os.path.join(d, "pressure_taps.csv"))))
    before = (t >= 0) & (t <= 1.8)
    after = (t >= 58.2) & (t <= 60.0)

    def calibrated(ch):
        p = np.polynomial.polynomial.polyval(v[:, col[ch]], cal[ch]["coefficients"])
        z0, z1 = p[before].mean(), p[after].mean()
        return p - np.interp(t, [0.9, 59.1], [z0, z1])

    alpha = np.polynomial.polynomial.polyval(v[:, col["alpha_enc"]], enc["coefficients"])
    q = calibrated("q_pitot")
    p = np.column_stack([calibrated(tp["channel"]) for tp in taps])

    # Tubing: divide the spectrum by H below the usable bandwidth (|H| >= 0.5), cosine roll-off.
    n = len(t)
    nfft = scipy.fft.next_fast_len(n, real=True)
    freqs = np.fft.rfftfreq(nfft, 1 / rate)
    lines = {}
    for i, tp in enumerate(taps):
        lines.setdefault((float(tp["tube_length_m"]), float(tp["tube_diameter_m"]) / 2, float(tp["volume_m3"])), []).append(i)
    for (L, radius, vol), idx in lines.items():
        grid = np.linspace(0, rate / 2, 501)
        h_grid = np.abs(tube_response(L, radius, vol, grid))
        below = np.nonzero(h_grid < 0.5)[0]
        cut = grid[below[0] - 1] if below.size else rate / 2
        wgt = np.clip((cut - freqs) / (0.2 * cut), 0, 1)
        wgt = np.where(freqs <= 0.8 * cut, 1.0, 0.5 * (1 - np.cos(np.pi * wgt)))
        gain = np.zeros(len(freqs), complex)
        band = freqs <= cut
        gain[band] = wgt[band] / tube_response(L, radius, vol, freqs[band])
        block = p[:, idx]
        line = block[0] + np.outer(np.arange(n) / (n - 1), block[-1] - block[0])
        spec = scipy.fft.rfft(block - line, nfft, axis=0) * gain[:, None]
        p[:, idx] = scipy.fft.irfft(spec, nfft, axis=0)[:n] + line

    # Cp on the wind-on span, then contour integration (TE -> upper -> LE -> lower -> TE).
    high = q[q >= 0.5 * q.max()]
    on = np.nonzero(q >= 0.9 * np.median(high))[0]
    s = slice(on[0], on[-1] + 1)
    cp = p[s] / q[s, None]
    x = np.array([float(tp["x_over_c"]) for tp in taps])
    y = np.array([float(tp["y_over_c"]) for tp in taps])
    up = np.array([tp["surface"] == "upper" for tp in taps])
    order = np.concatenate([np.nonzero(up)[0][np.argsort(-x[up])], np.nonzero(~up)[0][np.argsort(x[~up])]])
    cpo, xo, yo = cp[:, order], x[order], y[order]
    nu = up.sum()
    te_cp = 0.5 * (cpo[:, 0] + cpo[:, -1])
    le_cp = 0.5 * (cpo[:, nu - 1] + cpo[:, nu])
    cpc = np.column_stack([te_cp, cpo[:, :nu], le_cp, cpo[:, nu:]])
    xc = np.concatenate([[1.0], xo[:nu], [0.0], xo[nu:]])
    yc = np.concatenate([[0.0], yo[:nu], [0.0], yo[nu:]])
    cpb, xb, yb = np.roll(cpc, -1, axis=1), np.roll(xc, -1), np.roll(yc, -1)
    mean = 0.5 * (cpc + cpb)
    cn = (mean * (xb - xc)).sum(axis=1)
    cc = -(mean * (yb - yc)).sum(axis=1)
    xm = 0.5 * (xc + xb) - 0.25
    ym = 0.5 * (yc + yb)
    cm = -(mean * (xm * (xb - xc) + ym * (yb - yc))).sum(axis=1)
    a = np.radians(alpha[s])
    cl = cn * np.cos(a) - cc * np.sin(a)
    cd = cn * np.sin(a) + cc * np.cos(a)
    return cn, cc, cl, cd, cm


def read_only():
    with h5py.File(os.path.join(d, "pressure_daq.h5"), "r") as f:
        t = f["/daq/time_s"][()]
        v = f["/daq/volts"][()]
    assert np.all(np.diff(t) > 0) and np.isfinite(v).all()


for name, fn in [("PressurePath", reduce), ("ReadPressureDaq", read_only)]:
    best = float("inf")
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    print(f"{name} {best:.6f}")
