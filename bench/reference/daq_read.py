"""numpy/h5py reference for bench_daq_read: what a careful researcher writes to
load the same DAQ record and check it (monotonic time, finite values).
Prints one line per case: name, best-of-N seconds."""
import os
import sys
import time

import h5py
import numpy as np

d = os.environ.get("STALLSCOPE_BENCH_DIR", "/tmp/stallscope-bench")
repeats = int(sys.argv[1]) if len(sys.argv) > 1 else 5


def read_h5(p):
    with h5py.File(p, "r") as f:
        t = f["/daq/time_s"][()]
        v = f["/daq/volts"][()]
        names = list(f["/daq/volts"].attrs["channels"])
    assert np.all(np.diff(t) > 0) and np.isfinite(v).all()
    return t, v, names


def read_csv(p):
    with open(p) as f:
        header = f.readline().strip().split(",")
    data = np.loadtxt(p, delimiter=",", skiprows=1)
    t, v = data[:, 0], data[:, 1:]
    assert np.all(np.diff(t) > 0) and np.isfinite(v).all()
    return t, v, header[1:]


for name, fn, path in [("ReadDaqHdf5", read_h5, "daq_120k.h5"), ("ReadDaqCsv", read_csv, "daq_120k.csv")]:
    p = os.path.join(d, path)
    best = float("inf")
    for _ in range(repeats if "Hdf5" in name else max(1, repeats // 2)):
        t0 = time.perf_counter()
        fn(p)
        best = min(best, time.perf_counter() - t0)
    print(f"{name} {best:.6f}")
