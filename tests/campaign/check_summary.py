"""Reads a campaign summary with h5py and Python's csv module (outside the
project's own HDF5 and CSV code) and checks that campaign.h5 and the CSVs hold
the same tables. Prints one line per table and exits 1 on any difference."""
import csv
import math
import sys

import h5py

folder = sys.argv[1]
tables = sys.argv[2:]
bad = 0
with h5py.File(f"{folder}/campaign.h5", "r") as f:
    for name in tables:
        group = f[name]
        columns = [c.decode() if isinstance(c, bytes) else str(c) for c in group.attrs["columns"]]
        with open(f"{folder}/campaign_{name}.csv", newline="") as fh:
            rows = list(csv.reader(fh))
        if rows[0] != columns:
            print(f"{name}: header {rows[0]} != columns {columns}")
            bad += 1
            continue
        body = rows[1:]
        for j, column in enumerate(columns):
            data = group[column][()]
            if len(data) != len(body):
                print(f"{name}.{column}: {len(data)} values in HDF5, {len(body)} rows in CSV")
                bad += 1
                continue
            for i, value in enumerate(data):
                cell = body[i][j]
                if isinstance(value, bytes) or isinstance(value, str):
                    text = value.decode() if isinstance(value, bytes) else value
                    ok = text == cell
                elif math.isnan(float(value)):
                    ok = cell == ""
                else:
                    ok = cell != "" and math.isclose(float(value), float(cell), rel_tol=1e-9, abs_tol=1e-300)
                if not ok:
                    print(f"{name}.{column}[{i}]: HDF5 {value!r} != CSV {cell!r}")
                    bad += 1
        print(f"{name}: {len(body)} rows x {len(columns)} columns agree")
sys.exit(1 if bad else 0)
