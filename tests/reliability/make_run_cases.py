#!/usr/bin/python3
"""Writes the bad-input catalogue cases that need a whole small run: a DAQ CSV
with four taps, its tap table and calibrations, and for some a PIV stack or a
campaign manifest (tests/reliability/catalogue/{taps,calibration,motion,piv,campaign}_*).

Run with Debian's interpreter (it has h5py): /usr/bin/python3 tests/reliability/make_run_cases.py
Each case is the good run below broken in one place; expect.toml is written by hand.
"""
import os
import shutil

import h5py
import numpy as np

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "catalogue")
RATE_HZ, SAMPLES, PITCH_HZ = 250.0, 200, 5.0
TAPS = [("u1", "s01", 0.05, "upper"), ("u2", "s02", 0.5, "upper"), ("l1", "s03", 0.05, "lower"),
        ("l2", "s04", 0.5, "lower")]
TAP_HEADER = "tap,channel,x_over_c,y_over_c,surface,tube_length_m,tube_diameter_m,volume_m3,time_offset_s,line,status"

RUN_TOML = """# Catalogue run: a small good run with taps and calibrations that each case breaks in one place.
[run]
name = "cat"
chord_m = 0.15
airfoil = "NACA 0012"

[daq]
file = "daq.csv"

[daq.roles]
angle = "alpha_enc"
q_ref = "q_pitot"

[calibrate]
tap_table = "taps.csv"

[calibrate.calibrations]
taps = "calib_taps.toml"
encoder = "calib_encoder.toml"
reference = "calib_reference.toml"

[conditions]
velocity_m_s = 25.0

[motion]
"""

PIV_TOML = """
[piv]
file = "{file}"
pivot_x_m = 0.0375
pivot_y_m = 0.0
sync = "delay"
median_epsilon_m_s = 0.1
"""


def calibration(ident, kind, channels, gain, offset=0.0):
    s = f'id = "{ident}"\ndate = 2026-11-20\nkind = "{kind}"\n'
    for c in channels:
        s += f"\n[channels.{c}]\ncoefficients = [{offset}, {gain}]\n"
    return s


def write_run(case, constant_angle=False, taps=TAPS, tap_channels=None, piv=None, pitch_hz=PITCH_HZ, extra=""):
    """The good run in case's folder, with the changes asked for."""
    folder = os.path.join(ROOT, case)
    os.makedirs(folder, exist_ok=True)
    for entry in os.listdir(folder):  # all but the hand-written expect.toml
        path = os.path.join(folder, entry)
        if entry != "expect.toml":
            shutil.rmtree(path) if os.path.isdir(path) else os.remove(path)
    t = np.arange(SAMPLES) / RATE_HZ
    alpha_deg = np.full(SAMPLES, 10.0) if constant_angle else 10 + 8 * np.sin(2 * np.pi * pitch_hz * t)
    columns = {"alpha_enc": (alpha_deg + 30) / 6, "q_pitot": 6.0 + 0.001 * np.sin(2 * np.pi * 37 * t)}
    for i, (_, channel, _, surface) in enumerate(TAPS):
        columns[channel] = 0.1 * np.sin(2 * np.pi * pitch_hz * t + i) + (-0.2 if surface == "upper" else 0.1)
    with open(os.path.join(folder, "daq.csv"), "w") as f:
        f.write("time_s," + ",".join(columns) + "\n")
        for k in range(SAMPLES):
            f.write(f"{t[k]:.4f}," + ",".join(f"{columns[c][k]:.5f}" for c in columns) + "\n")
    with open(os.path.join(folder, "taps.csv"), "w") as f:
        f.write(TAP_HEADER + "\n")
        for name, channel, x, surface in taps:
            f.write(f"{name},{channel},{x},,{surface},,,,,,ok\n")
    files = {
        "calib_taps.toml": calibration("cat-taps", "pressure_transducers", tap_channels or [c for _, c, _, _ in TAPS], 500.0),
        "calib_encoder.toml": calibration("cat-encoder", "angle_encoder", ["alpha_enc"], 6.0, -30.0),
        "calib_reference.toml": calibration("cat-reference", "reference_pressure", ["q_pitot"], 50.0),
        "run.toml": RUN_TOML + extra + (PIV_TOML.format(file=piv) if piv else ""),
    }
    for name, text in files.items():
        with open(os.path.join(folder, name), "w") as f:
            f.write(text)
    return folder


def write_piv_h5(folder, u_shape=None, x_m=None):
    nf, ny, nx = 4, 5, 6
    x = np.linspace(0.0, 0.15, nx) if x_m is None else np.asarray(x_m)
    y = np.linspace(0.01, 0.06, ny)
    with h5py.File(os.path.join(folder, "piv.h5"), "w") as f:
        g = f.create_group("piv")
        g["x_m"], g["y_m"], g["time_s"] = x, y, 0.1 + 0.05 * np.arange(nf)
        u = g.create_dataset("u", data=np.full(u_shape or (nf, ny, nx), 25.0, np.float32))
        v = g.create_dataset("v", data=np.zeros((nf, ny, nx), np.float32))
        u.attrs["units"] = v.attrs["units"] = "m/s"


def write_piv_text(folder, frames=3, off_grid_frame=None):
    d = os.path.join(folder, "frames")
    os.makedirs(d)
    with open(os.path.join(d, "index.csv"), "w") as index:
        index.write("frame,file,time_s\n")
        for n in range(frames):
            name = f"frame_{n:03d}.txt"
            index.write(f"{n},{name},{0.1 + 0.05 * n:.2f}\n")
            with open(os.path.join(d, name), "w") as f:
                f.write("# x_m y_m u_m_s v_m_s\n")
                for y in np.linspace(0.01, 0.06, 5):
                    for x in np.linspace(0.0, 0.15, 6):
                        # A frame exported on another grid: x shifted by a third of a cell.
                        xx = x + 0.01 if n == off_grid_frame else x
                        f.write(f"{xx:.4f} {y:.4f} 25.0 0.0\n")


def write_campaign(case, manifest, with_run=True):
    folder = write_run(case) if with_run else os.path.join(ROOT, case)
    with open(os.path.join(folder, "campaign.toml"), "w") as f:
        f.write(manifest)


def main():
    write_run("taps_unknown_surface", taps=[TAPS[0], ("u2", "s02", 0.5, "suction")] + TAPS[2:])
    write_run("taps_duplicate", taps=TAPS[:2] + [("u2", "s03", 0.05, "lower")] + TAPS[3:])
    write_run("taps_outside_chord", taps=TAPS[:3] + [("l2", "s04", 1.2, "lower")])
    write_run("calibration_extra_channels", tap_channels=[f"s{i:02d}" for i in range(1, 7)])
    write_run("calibration_missing_channel", tap_channels=["s01", "s02", "s03"])
    write_run("motion_angle_constant", constant_angle=True)
    write_run("motion_forced_type_misfits", extra='type = "static"\n')
    # 2.5 Hz over 0.8 s: two periods, but only one starts and ends at the minimum angle.
    write_run("cycles_fewer_than_two", pitch_hz=2.5, extra="\n[cycles]\n")
    write_run("phase_bins_empty", extra="\n[cycles]\n\n[cp]\nclip_fraction = 0.05  # each value of this exactly periodic record repeats once a period\n\n[loads]\n\n[phase]\nbins = 3600\n")
    write_piv_h5(write_run("piv_h5_shape_mismatch", piv="piv.h5"), u_shape=(4, 5, 5))
    write_piv_h5(write_run("piv_h5_grid_not_monotonic", piv="piv.h5"), x_m=[0.0, 0.03, 0.09, 0.06, 0.12, 0.15])
    write_piv_text(write_run("piv_text_off_grid", piv="frames"), off_grid_frame=2)
    write_piv_h5(write_run("piv_mask_region_two_vertices", piv="piv.h5",
                           extra="\n[piv.masks.window_edge]\nx = [0.0, 0.15]\ny = [0.05, 0.06]\n"))
    write_campaign("campaign_missing_run_config",
                   '[campaign]\nname = "cat-campaign"\n\n[[runs]]\nconfig = "run.toml"\n\n'
                   '[[runs]]\nconfig = "runs/cat-02.toml"\n')
    write_campaign("campaign_repeat_of_missing_run",
                   '[campaign]\nname = "cat-campaign"\nbase = "run.toml"\n\n[[runs]]\nname = "cat-01"\n\n'
                   '[[runs]]\nname = "cat-01b"\nrepeat_of = "cat-02"\n')
    write_campaign("campaign_missing_raw_file",
                   '[campaign]\nname = "cat-campaign"\nbase = "run.toml"\n\n[[runs]]\nname = "cat-01"\n\n'
                   '[[runs]]\nname = "cat-02"\n[runs.files]\ndaq.file = "raw/cat-02.csv"\n')


if __name__ == "__main__":
    main()
