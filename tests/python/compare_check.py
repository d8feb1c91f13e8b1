"""Independent recomputation of `glaze compare`'s layout table from the
case reports (`cases/ID/post/report.json`, written by `glaze post`), with
plain Python: per layout the largest vertical peak-to-peak motion over its
spans and cases, the least phase-to-phase distance, the least clearance
margin and the largest tension share of rated strength; then the ranking
rule of the comparison (complete first, fewer cases inside a clearance,
larger worst margin, smaller worst motion).

Usage: python3 compare_check.py STUDY_DIR → prints the glaze figures and
the recomputed ones side by side as one JSON object.
"""
import json
import os
import sys

study = sys.argv[1]
manifest = json.load(open(os.path.join(study, "study.json")))
glaze = json.load(open(os.path.join(study, "compare.json")))

layouts = {}
for case in manifest["cases"]:
    path = os.path.join(study, "cases", case["id"], "post", "report.json")
    lay = layouts.setdefault(case["layout"], {"cases": 0, "complete": 0, "inside": 0, "p2p": 0.0,
                                               "dist": None, "margin": None, "tension": 0.0})
    lay["cases"] += 1
    if not os.path.exists(os.path.join(study, "cases", case["id"], "case.json")):
        continue
    r = json.load(open(path))
    lay["complete"] += 1
    lay["p2p"] = max([lay["p2p"]] + [s["vertical_peak_to_peak_m"] for s in r["spans"]])
    dists = [p["min_distance_m"] for p in r["clearance"]["pairs"]]
    margins = [p["margin_m"] for p in r["clearance"]["pairs"] if p["margin_m"] is not None]
    margins += [g["margin_m"] for g in r["clearance"]["ground"] if g["margin_m"] is not None]
    if dists:
        lay["dist"] = min(dists + ([lay["dist"]] if lay["dist"] is not None else []))
    if margins:
        m = min(margins)
        lay["inside"] += 1 if m < 0 else 0
        lay["margin"] = min([m] + ([lay["margin"]] if lay["margin"] is not None else []))
    lay["tension"] = max([lay["tension"]] + [c["share_of_rated"] for c in r["conductors"]])

order = sorted(layouts, key=lambda k: (layouts[k]["complete"] < layouts[k]["cases"], layouts[k]["inside"],
                                       -(layouts[k]["margin"] if layouts[k]["margin"] is not None else -1e300),
                                       layouts[k]["p2p"]))
print(json.dumps({
    "reference": {"order": order, "layouts": layouts},
    "glaze": {"order": [l["layout"] for l in glaze["layouts"]],
              "layouts": {l["layout"]: {"cases": l["cases"], "complete": l["complete"],
                                        "inside": l["inside_clearance"], "p2p": l["max_vertical_peak_to_peak_m"],
                                        "dist": l["min_phase_distance_m"], "margin": l["worst_margin_m"],
                                        "tension": l["peak_tension_share_of_rated"]}
                          for l in glaze["layouts"]}},
}))
