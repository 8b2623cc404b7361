"""Opens strayflux's VTK output in ParaView (run with pvpython) and checks what a user
would see: the reader ParaView picks, the array names, the bounds, the point count, the
time steps of a `.pvd`, and the scene's cells.

usage: pvpython check_paraview.py EXPECTATIONS.json   (the file check_maps.py takes)

Exits 1 with one message per mismatch; prints what it checked.
"""

import json
import os
import sys

from paraview import servermanager
from paraview.simple import OpenDataFile

# IEEE 754-2008 binary32 rounding of the stored origin/spacing (2^-24 relative), twice.
F32_REL = 2.0 ** -23

FAILURES = []


def fail(msg):
    FAILURES.append(msg)
    print("FAIL: " + msg)


def ok(msg):
    print("ok:   " + msg)


def expected_bounds(spec):
    out = []
    for a in range(3):
        lo = spec["origin_m"][a] + spec["extent"][2 * a] * spec["spacing_m"][a]
        hi = spec["origin_m"][a] + spec["extent"][2 * a + 1] * spec["spacing_m"][a]
        out += [lo, hi]
    return out


def check_image(reader, name, spec):
    """Array names, components, bounds and point count of the data `reader` holds now."""
    keys = reader.PointData.keys()
    for arr, comps in (("B_re", 3), ("B_im", 3), ("B_rms", 1)):
        if arr not in keys:
            fail("%s: ParaView shows no point array %s (has %s)" % (name, arr, keys))
            return
        if reader.PointData[arr].GetNumberOfComponents() != comps:
            fail("%s: %s has %d components in ParaView, expected %d" % (
                name, arr, reader.PointData[arr].GetNumberOfComponents(), comps))
            return
    info = reader.GetDataInformation()
    bounds = info.GetBounds()
    want = expected_bounds(spec)
    # Each bound is origin + n * spacing: the rounding of both adds up.
    slack = []
    for a in range(3):
        for e in spec["extent"][2 * a:2 * a + 2]:
            slack.append(F32_REL * (abs(spec["origin_m"][a]) + e * abs(spec["spacing_m"][a])))
    if any(abs(b - w) > t for b, w, t in zip(bounds, want, slack)):
        fail("%s: bounds %s in ParaView, expected %s" % (name, list(bounds), want))
        return
    n = 1
    for a in range(3):
        n *= spec["extent"][2 * a + 1] - spec["extent"][2 * a] + 1
    if info.GetNumberOfPoints() != n:
        fail("%s: %d points in ParaView, expected %d" % (name, info.GetNumberOfPoints(), n))
        return
    ok("%s: arrays %s, bounds %s, %d points" % (name, sorted(keys), ["%.6g" % b for b in bounds], n))


def check_map(exp, spec):
    out_dir = exp["out_dir"]
    if spec["line"] != "all":
        path = os.path.join(out_dir, spec["id"] + ".vti")
        reader = OpenDataFile(path)
        if reader is None or reader.GetXMLName() != "XMLImageDataReader":
            fail("%s: ParaView did not open it as XML image data (%s)" % (
                path, None if reader is None else reader.GetXMLName()))
            return
        reader.UpdatePipeline()
        check_image(reader, os.path.basename(path), spec)
        return
    path = os.path.join(out_dir, spec["id"] + ".pvd")
    reader = OpenDataFile(path)
    if reader is None or reader.GetXMLName() != "PVDReader":
        fail("%s: ParaView did not open it as a PVD collection (%s)" % (
            path, None if reader is None else reader.GetXMLName()))
        return
    steps = list(reader.TimestepValues)
    if steps != exp["lines_hz"]:
        fail("%s: time steps %s in ParaView, expected the line frequencies %s" % (
            path, steps, exp["lines_hz"]))
        return
    ok("%s: PVDReader, time steps = line frequencies %s Hz" % (os.path.basename(path), steps))
    for t in steps:
        reader.UpdatePipeline(t)
        data = servermanager.Fetch(reader)
        f = data.GetFieldData().GetArray("frequency_hz")
        if f is None or f.GetValue(0) != t:
            fail("%s: at time %g ParaView loads the map of %s Hz" % (
                path, t, None if f is None else f.GetValue(0)))
            continue
        check_image(reader, "%s at t = %g" % (os.path.basename(path), t), spec)


def check_scene_vtp(exp):
    path = os.path.join(exp["out_dir"], "scene.vtp")
    reader = OpenDataFile(path)
    if reader is None or reader.GetXMLName() != "XMLPolyDataReader":
        fail("%s: ParaView did not open it as XML poly data" % path)
        return
    reader.UpdatePipeline()
    cells = reader.GetDataInformation().GetNumberOfCells()
    if cells != len(exp["elements"]) + exp.get("shields", 0):
        fail("scene.vtp: %d cells in ParaView, expected %d" % (cells, len(exp["elements"])))
        return
    if "element" not in reader.CellData.keys():
        fail("scene.vtp: ParaView shows no cell array `element`")
        return
    names = reader.FieldData.keys()
    missing = [e["name"] for e in exp["elements"] if e["name"] not in names]
    if missing:
        fail("scene.vtp: ParaView shows no field data %s (has %s)" % (missing, names))
        return
    ok("scene.vtp: %d cells, cell array `element`, field data %s" % (cells, sorted(names)))


def main():
    if len(sys.argv) != 2:
        print("usage: pvpython check_paraview.py EXPECTATIONS.json", file=sys.stderr)
        sys.exit(2)
    with open(sys.argv[1]) as f:
        exp = json.load(f)
    print("ParaView check of %s" % exp["out_dir"])
    for spec in exp["maps"]:
        check_map(exp, spec)
    check_scene_vtp(exp)
    if FAILURES:
        print("%d mismatch(es) in ParaView:" % len(FAILURES), file=sys.stderr)
        for f in FAILURES:
            print("  " + f, file=sys.stderr)
        sys.exit(1)


if __name__ == "__main__":
    main()
