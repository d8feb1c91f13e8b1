"""Bit-for-bit comparison of two HDF5 files with h5py and NumPy: every
dataset (dtype, shape and bytes) and every attribute, except the root
attribute `wall_time_s` (the wall time of the run, which no two runs share).

Usage: python3 h5_equal.py A.h5 B.h5  → prints one JSON object:
{"equal": bool, "datasets": n, "attributes": m, "differences": [...]}
"""
import json
import sys

import h5py
import numpy as np

SKIP_ATTRS = {("/", "wall_time_s")}


def items(f):
    out = {}

    def visit(name, obj):
        out[name] = obj

    f.visititems(visit)
    out["/"] = f
    return out


def same_value(a, b):
    a, b = np.asarray(a), np.asarray(b)
    if a.dtype != b.dtype or a.shape != b.shape:
        return False
    if a.dtype.kind == "O":  # variable-length strings: compare the values, not the pointers
        return a.tolist() == b.tolist()
    return a.tobytes() == b.tobytes()


def main():
    diffs = []
    n_data = n_attr = 0
    with h5py.File(sys.argv[1], "r") as fa, h5py.File(sys.argv[2], "r") as fb:
        ia, ib = items(fa), items(fb)
        for name in sorted(set(ia) | set(ib)):
            if name not in ia or name not in ib:
                diffs.append(f"{name}: only in one file")
                continue
            a, b = ia[name], ib[name]
            if isinstance(a, h5py.Dataset):
                n_data += 1
                if not isinstance(b, h5py.Dataset) or not same_value(a[()], b[()]):
                    diffs.append(f"{name}: data differ")
            for key in sorted(set(a.attrs) | set(b.attrs)):
                if (name, key) in SKIP_ATTRS:
                    continue
                n_attr += 1
                if key not in a.attrs or key not in b.attrs or not same_value(a.attrs[key], b.attrs[key]):
                    diffs.append(f"{name}@{key}: attribute differs")
    print(json.dumps({"equal": not diffs, "datasets": n_data, "attributes": n_attr, "differences": diffs[:20]}))


main()
