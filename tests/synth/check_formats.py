"""Checks with h5py (a reference reader independent of ours) that a synthetic run
follows the project's raw formats (notes/interfaces.md, "Raw input formats").
Usage: check_formats.py RUN_DIR. Exit 0 when every check passes."""
import csv
import sys
from pathlib import Path

import h5py
import numpy as np

run = Path(sys.argv[1])
problems = []


def expect(ok, what):
    if not ok:
        problems.append(what)


def text_list(attr):
    return [a.decode() if isinstance(a, bytes) else str(a) for a in attr]


with h5py.File(run / "daq.h5", "r") as f:
    t, v = f["daq/time_s"], f["daq/volts"]
    expect(t.ndim == 1 and t.dtype == np.float64, "daq/time_s must be 1-D float64")
    expect(v.ndim == 2 and v.dtype == np.float64, "daq/volts must be 2-D float64")
    expect(v.shape[0] == t.shape[0], "daq/volts rows must match daq/time_s")
    channels = text_list(v.attrs["channels"])
    expect(len(channels) == v.shape[1], "channels attribute must name every column")
    expect(channels[:4] == ["alpha_enc", "q_pitot", "p_static", "t_air"], f"unexpected first channels {channels[:5]}")
    expect(all(c.startswith("p") for c in channels[5:]), "tap channels p01..pNN")
    expect(t.attrs["units"] in ("s", b"s"), "daq/time_s units s")
    expect(np.all(np.diff(t[:]) > 0), "time must increase")
    expect(np.all(np.abs(v[:]) <= 10.0), "volts within the DAQ range")
    if "cam_trigger" in channels:
        trig = v[:, channels.index("cam_trigger")]
        expect(set(np.round(trig).astype(int)) <= {0, 5}, "cam_trigger is a 0/5 V TTL signal")

with open(run / "taps.csv", newline="") as f:
    rows = list(csv.reader(f))
expect(rows[0] == "tap,channel,x_over_c,y_over_c,surface,tube_length_m,tube_diameter_m,volume_m3,"
       "time_offset_s,line,status".split(","), f"tap table header {rows[0]}")
expect(all(r[4] in ("upper", "lower") and r[10] in ("ok", "dead", "suspect") for r in rows[1:]), "tap rows")
expect(sorted(r[1] for r in rows[1:]) == sorted(c for c in channels if c.startswith("p") and c[1:].isdigit()),
       "every tap channel is in the DAQ file")

if (run / "piv.h5").exists():
    with h5py.File(run / "piv.h5", "r") as f:
        u, v, valid = f["piv/u"], f["piv/v"], f["piv/valid"]
        x, y, tt = f["piv/x_m"], f["piv/y_m"], f["piv/time_s"]
        expect(u.dtype == np.float32 and v.dtype == np.float32, "piv/u, piv/v float32")
        expect(u.ndim == 3 and u.shape == v.shape == valid.shape, "piv fields frames x ny x nx")
        expect(valid.dtype == np.uint8, "piv/valid uint8")
        expect(x.shape == (u.shape[2],) and y.shape == (u.shape[1],), "grid axes nx and ny")
        expect(tt.shape == (u.shape[0],), "one time a frame")
        expect(u.attrs["units"] in ("m/s", "px/frame", b"m/s", b"px/frame"), "piv units attribute")
        expect(np.all(np.diff(tt[:]) > 0), "camera times increase")
        expect(valid[:].min() == 0 and valid[:].max() == 1, "the airfoil is masked")

with h5py.File(run / "truth.h5", "r") as f:
    for name in ["time_s", "alpha_deg", "cn", "cc", "cl", "cd_p", "cm", "separation_x"]:
        expect(f"truth/{name}" in f and f[f"truth/{name}"].dtype == np.float64, f"truth/{name} float64")
    n = f["truth/time_s"].shape[0]
    expect(all(f[f"truth/{k}"].shape == (n,) for k in ["alpha_deg", "cn", "cm"]), "truth series share the time base")
    expect("truth/vortex/x_over_c" in f, "truth vortex tracks")
    expect(f["truth/cm"].attrs["moment_ref_x_over_c"] == 0.25, "cm about c/4")

with open(run / "truth_events.csv", newline="") as f:
    header = next(csv.reader(f))
expect(header == "cycle,event,status,reason,t_s,t_conv,t_uncertainty_s,phase_deg,alpha_deg,value".split(","),
       f"truth_events header {header}")

for p in problems:
    print("format problem:", p)
sys.exit(1 if problems else 0)
