"""What a results file holds, read with h5py and NumPy (for the tests of
interrupted, resumed and diverged runs).

Usage: python3 h5_summary.py FILE.h5  → prints one JSON object:
{"complete": 0 or 1, "groups": [...], "records": T, "last_time": t,
 "all_finite": bool (every /dynamic dataset), "divergence": null or
 {"time": t, "report": str, "finite": bool}}
"""
import json
import sys

import h5py
import numpy as np


def main():
    with h5py.File(sys.argv[1], "r") as f:
        out = {"complete": int(f.attrs.get("complete", -1)), "groups": sorted(f.keys())}
        dyn = f.get("dynamic")
        out["records"] = int(dyn["time"].shape[0]) if dyn is not None else 0
        out["last_time"] = float(dyn["time"][-1]) if out["records"] else None
        out["all_finite"] = bool(
            dyn is not None and all(np.isfinite(dyn[name][()]).all() for name in dyn.keys())
        )
        div = f.get("divergence")
        if div is None:
            out["divergence"] = None
        else:
            report = div.attrs["report"]
            if isinstance(report, bytes):
                report = report.decode()
            finite = all(np.isfinite(div[name][()]).all() for name in div.keys())
            out["divergence"] = {"time": float(div["time"][0]), "report": str(report), "finite": bool(finite)}
    print(json.dumps(out))


main()
