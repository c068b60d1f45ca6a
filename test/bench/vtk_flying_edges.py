"""Peer for Fieldkiln's benchmark: VTK's vtkFlyingEdges3D (Schroeder, Maynard, Geveci 2015), single-threaded.

Reads a float32 grid (raw little-endian, C order [nz, ny, nx]) and times only the contouring.
Usage: python3 vtk_flying_edges.py <raw file> <nx> <ny> <nz> <level> <repeats>
Prints one JSON line: seconds (best of repeats), triangles, points, euler (V - E + F).
Needs Debian's python3-vtk9 (and numpy); the benchmark skips this peer when VTK is absent.
"""
import json
import sys
import time

import numpy as np
import vtk
from vtk.util import numpy_support

path, nx, ny, nz, level, repeats = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4]), float(sys.argv[5]), int(sys.argv[6])
data = np.fromfile(path, dtype='<f4')
assert data.size == nx * ny * nz
img = vtk.vtkImageData()
img.SetDimensions(nx, ny, nz)
arr = numpy_support.numpy_to_vtk(data, deep=False, array_type=vtk.VTK_FLOAT)
img.GetPointData().SetScalars(arr)
vtk.vtkSMPTools.Initialize(1)
best = None
out = None
for _ in range(repeats):
    fe = vtk.vtkFlyingEdges3D()
    fe.SetInputData(img)
    fe.SetValue(0, level)
    fe.ComputeNormalsOff()
    fe.ComputeGradientsOff()
    fe.ComputeScalarsOff()
    t = time.perf_counter()
    fe.Update()
    dt = time.perf_counter() - t
    if best is None or dt < best:
        best = dt
    out = fe.GetOutput()
polys = numpy_support.vtk_to_numpy(out.GetPolys().GetConnectivityArray()).reshape(-1, 3).astype(np.int64)
npts = out.GetNumberOfPoints()
edges = np.sort(np.concatenate([polys[:, [0, 1]], polys[:, [1, 2]], polys[:, [2, 0]]]), axis=1)
nedges = len(np.unique(edges[:, 0] * npts + edges[:, 1]))
used = len(np.unique(polys))
print(json.dumps({"seconds": best, "triangles": int(len(polys)), "points": int(npts), "euler": int(used - nedges + len(polys)), "smpBackend": vtk.vtkSMPTools.GetBackend()}))
