"""Independent reader for stallscope archives (h5py): walks every dataset and
prints one JSON object per line: path, shape, dtype kind, units, a checksum
(sum of finite values) and the first text value. Exit 1 if a numeric dataset
has no units attribute."""
import json
import sys

import h5py
import numpy as np

missing_units = []


def visit(name, obj):
    if not isinstance(obj, h5py.Dataset):
        return
    data = obj[()]
    kind = obj.dtype.kind
    rec = {"path": "/" + name, "shape": list(obj.shape), "kind": kind}
    units = obj.attrs.get("units")
    if isinstance(units, bytes):
        units = units.decode()
    rec["units"] = units
    if kind in "fiu":
        if units is None:
            missing_units.append("/" + name)
        arr = np.asarray(data, dtype=float)
        rec["sum"] = float(np.nansum(arr))
    else:
        first = data if np.ndim(data) == 0 else (data[0] if len(data) else b"")
        rec["first"] = first.decode() if isinstance(first, bytes) else str(first)
    print(json.dumps(rec))


with h5py.File(sys.argv[1], "r") as f:
    f.visititems(visit)
    for key, value in f["/run"].attrs.items() if "run" in f else []:
        if isinstance(value, bytes):
            value = value.decode()
        print(json.dumps({"attr": "/run/" + key, "value": value if isinstance(value, str) else float(value)}))
for m in missing_units:
    print("missing units: " + m, file=sys.stderr)
sys.exit(1 if missing_units else 0)
