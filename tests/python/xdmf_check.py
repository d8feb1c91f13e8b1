"""Reads a glaze XDMF description with meshio, as an independent reader.

Usage: python3 xdmf_check.py FILE.xdmf

Opens FILE.xdmf with ``meshio.xdmf.TimeSeriesReader`` and prints one JSON
object: the points, cells (type, count, connectivity) and time steps it
finds, and at the last time step the node coordinates twice, from that
step's Geometry and from its ``position`` attribute, with the
``displacement``, ``velocity`` (node) and ``axial_force`` (cell) arrays.

``TimeSeriesReader.read_points_cells`` returns the mesh of the first grid
only; the last step's Geometry is read by pointing the reader at the last
grid of the collection and calling it again (meshio's own DataItem reading,
after all attributes have been read).

Needs meshio and h5py (``scripts/setup.sh`` installs them).
"""

import json
import sys

import meshio


def main() -> None:
    path = sys.argv[1]
    with meshio.xdmf.TimeSeriesReader(path) as reader:
        points, cells = reader.read_points_cells()
        times = []
        last = None
        for k in range(reader.num_steps):
            t, point_data, cell_data = reader.read_data(k)
            times.append(t)
            last = (point_data, cell_data)
        point_data, cell_data = last
        reader.mesh_grid = reader.collection[-1]
        last_points, _ = reader.read_points_cells()
    out = {
        "meshio_version": meshio.__version__,
        "points": int(points.shape[0]),
        "cell_types": [block.type for block in cells],
        "cells": int(sum(len(block.data) for block in cells)),
        "connectivity": [[int(v) for v in row] for block in cells for row in block.data],
        "time_steps": len(times),
        "times": times,
        "first_points": points.tolist(),
        "last_geometry": last_points.tolist(),
        "last_position": point_data["position"].tolist(),
        "last_displacement": point_data["displacement"].tolist(),
        "last_velocity": point_data["velocity"].tolist(),
        "last_axial_force": [float(v) for block in cell_data["axial_force"] for v in block],
    }
    print(json.dumps(out))


if __name__ == "__main__":
    main()
