#!/usr/bin/python3
"""Writes the binary (HDF5) seeds of the fuzz corpora in tests/fuzz/seeds/.

Run with Debian's interpreter (it has h5py): /usr/bin/python3 tests/fuzz/make_seeds.py
Small on purpose: libFuzzer mutates small inputs far faster.
"""
import os
import sys

import h5py
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "reliability"))
import make_hdf5_cases  # noqa: E402  (the minimal archive layout)


def main():
    seeds = os.path.join(HERE, "seeds")
    t = np.arange(8) * 1e-3
    with h5py.File(os.path.join(seeds, "daq_hdf5", "daq.h5"), "w") as f:
        f["daq/time_s"] = t
        d = f.create_dataset("daq/volts", data=np.column_stack([0.5 + t, 2.0 + 0 * t]))
        d.attrs["channels"] = np.array(["alpha_enc", "q_pitot"], dtype=h5py.string_dtype())
    with h5py.File(os.path.join(seeds, "piv_hdf5", "piv.h5"), "w") as f:
        u = np.full((2, 3, 4), 10.0, dtype=np.float32)
        v = np.zeros((2, 3, 4), dtype=np.float32)
        for name, data in (("u", u), ("v", v)):
            d = f.create_dataset("piv/" + name, data=data)
            d.attrs["units"] = "m/s"
        f["piv/x_m"] = np.linspace(0.0, 0.03, 4)
        f["piv/y_m"] = np.linspace(0.0, 0.02, 3)
        f["piv/time_s"] = np.array([0.0, 0.001])
        f["piv/valid"] = np.ones((2, 3, 4), dtype=np.uint8)
    make_hdf5_cases.ROOT = os.path.join(seeds)
    make_hdf5_cases.write_archive("archive_bytes", summary_without="nothing")
    os.replace(os.path.join(seeds, "archive_bytes", "cat.h5"), os.path.join(seeds, "archive_bytes", "archive.h5"))


if __name__ == "__main__":
    main()
