"""Reference values from scipy/numpy for the events tests (Debian's python3).

usage: scipy_reference.py stats FILE         one number per line in FILE
       scipy_reference.py filtfilt FILE FC FS
       scipy_reference.py circ FILE         angles in degrees, one a line
Prints one "name value" pair per line (filtfilt: one filtered value per line).
"""
import sys

import numpy as np
from scipy import signal, stats


def main():
    mode, path = sys.argv[1], sys.argv[2]
    x = np.loadtxt(path, ndmin=1)
    if mode == "stats":
        n = len(x)
        mean = x.mean()
        sem = stats.sem(x)
        lo, hi = stats.t.interval(0.95, n - 1, loc=mean, scale=sem)
        print("mean %.17g" % mean)
        print("std %.17g" % x.std(ddof=1))
        print("ci95_lo %.17g" % lo)
        print("ci95_hi %.17g" % hi)
        print("median %.17g" % np.median(x))
        print("p05 %.17g" % np.percentile(x, 5))
        print("p95 %.17g" % np.percentile(x, 95))
        print("skew %.17g" % stats.skew(x, bias=False))
        print("kurtosis %.17g" % stats.kurtosis(x, bias=False))
        print("t975 %.17g" % stats.t.ppf(0.975, n - 1))
    elif mode == "circ":
        print("mean %.17g" % stats.circmean(x, high=360, low=0))
        print("std %.17g" % stats.circstd(x, high=360, low=0))
    elif mode == "filtfilt":
        fc, fs = float(sys.argv[3]), float(sys.argv[4])
        b, a = signal.butter(2, fc / (0.5 * fs))
        for v in signal.filtfilt(b, a, x):
            print("%.17g" % v)
    else:
        sys.exit("unknown mode " + mode)


main()
