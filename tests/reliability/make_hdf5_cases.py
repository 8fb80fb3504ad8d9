#!/usr/bin/python3
"""Writes the HDF5 files of the bad-input catalogue (tests/reliability/catalogue/daq_h5_*).

Run with Debian's interpreter (it has h5py): /usr/bin/python3 tests/reliability/make_hdf5_cases.py
The cases that need a whole small run (taps, calibrations, PIV, campaigns) are written by make_run_cases.py.
Each case folder also holds its run.toml and expect.toml, written by hand.
"""
import os

import h5py
import numpy as np

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "catalogue")
N = 10
DT = 0.001
CHANNELS = ["alpha_enc", "q_pitot"]


def good_arrays():
    t = np.arange(N) * DT
    volts = np.column_stack([0.5 + 0.01 * np.arange(N), 2.0 + 0.001 * np.arange(N)])
    return t, volts


def write(case, time_s=None, volts=None, channels=CHANNELS, name="daq.h5"):
    folder = os.path.join(ROOT, case)
    os.makedirs(folder, exist_ok=True)
    path = os.path.join(folder, name)
    with h5py.File(path, "w") as f:
        g = f.create_group("daq")
        if time_s is not None:
            g.create_dataset("time_s", data=time_s)
        if volts is not None:
            d = g.create_dataset("volts", data=volts)
            if channels is not None:
                d.attrs["channels"] = np.array(channels, dtype=h5py.string_dtype())
    return path


def write_table(group, name, columns, drop=None):
    g = group.create_group(name)
    names = []
    for col, values in columns:
        if col == drop:
            continue
        names.append(col)
        if not values or isinstance(values[0], str):  # an empty column is a text column here
            g.create_dataset(col, data=np.array(values, dtype=h5py.string_dtype()))
        else:
            g.create_dataset(col, data=np.array(values))
    g.attrs["columns"] = np.array(names, dtype=h5py.string_dtype())
    return g


def write_archive(case, drop_column=(None, None), ragged=False, link_cycle=False, summary_without=None):
    """A minimal archive in the layout pipeline/archive.cpp writes."""
    folder = os.path.join(ROOT, case)
    os.makedirs(folder, exist_ok=True)
    with h5py.File(os.path.join(folder, "cat.h5"), "w") as f:
        p = f.create_group("provenance")
        for a in ["tool_version", "git_commit", "created_utc", "command_line", "host", "config_path"]:
            p.attrs[a] = "x"
        p.create_dataset("config_toml", data="[run]\nname = \"cat\"\n", dtype=h5py.string_dtype())
        table, column = drop_column
        write_table(p, "inputs", [("path", ["daq.csv"]), ("role", ["DAQ file"]), ("bytes", [120]),
                                  ("sha256", ["0" * 64])], column if table == "inputs" else None)
        write_table(p, "calibrations", [("id", []), ("file", []), ("sha256", [])])
        stages = [("name", ["run", "daq"]), ("seconds", [0.1, 0.2] if not ragged else [0.1, 0.2, 0.3]),
                  ("parameters", ["", ""])]
        write_table(p, "stages", stages)
        run = f.create_group("run")
        run.attrs["chord_m"] = 0.15
        if link_cycle:
            run["again"] = run  # a hard link back to its own group
        if summary_without:
            ev = f.create_group("events")
            write_table(ev, "summary", [("event", ["lift_peak"]), ("quantity", ["t_conv"]), ("n", [12]),
                                        ("mean", [1.1]), ("std", [0.1]), ("ci95_lo", [1.0]), ("ci95_hi", [1.2])],
                        summary_without)


def main():
    t, v = good_arrays()
    # A good file cut at two thirds, as a copy interrupted on the tunnel PC leaves it.
    big_t = np.arange(1000) * DT
    big_v = np.column_stack([np.sin(big_t), np.cos(big_t)])
    path = write("daq_h5_truncated", big_t, big_v)
    size = os.path.getsize(path)
    with open(path, "r+b") as f:
        f.truncate(size * 2 // 3)
    write("daq_h5_missing_volts", t, None)
    write("daq_h5_volts_1d", t, v[:, 0].copy(), ["alpha_enc"])
    write("daq_h5_time_2d", t.reshape(N, 1), v)
    write("daq_h5_row_mismatch", t, v[:-1])
    write("daq_h5_channels_short", t, v, ["alpha_enc"])
    write("daq_h5_channels_missing", t, v, None)
    write("daq_h5_channels_duplicate", t, v, ["q_pitot", "q_pitot"])
    write("daq_h5_volts_text", t, np.array([["a", "b"]] * N, dtype=h5py.string_dtype()))
    v_nan = v.copy()
    v_nan[3, 1] = np.nan
    write("daq_h5_nan_volts", t, v_nan)
    v_inf = v.copy()
    v_inf[8, 0] = -np.inf
    write("daq_h5_inf_volts", t, v_inf)
    t_dup = t.copy()
    t_dup[6] = t_dup[5]
    write("daq_h5_duplicated_time", t_dup, v)
    t_back = t.copy()
    t_back[2] = -1.0
    write("daq_h5_non_monotonic_time", t_back, v)
    write("daq_h5_no_samples", np.zeros(0), np.zeros((0, 2)))
    # Damaged archives, for `inspect`: each breaks one part of a minimal good one.
    write_archive("inspect_provenance_missing_column", drop_column=("inputs", "sha256"))
    write_archive("inspect_ragged_table", ragged=True)
    write_archive("inspect_link_cycle", link_cycle=True)
    write_archive("inspect_summary_missing_column", summary_without="mean")
    # An HDF5 file that is not an archive, for `inspect`.
    path = os.path.join(ROOT, "inspect_not_an_archive", "cat.h5")
    os.makedirs(os.path.dirname(path), exist_ok=True)
    with h5py.File(path, "w") as f:
        f.create_dataset("loads/cn", data=np.zeros(4))


if __name__ == "__main__":
    main()
