#!/usr/bin/env python3
"""Reads strayflux's VTK output back with VTK's own XML readers and checks it.

usage: python3 check_maps.py EXPECTATIONS.json

The expectations file is written by tests/vtk_readback.rs. It names the strayflux
binary, the scene, the output folder, the scene's spectral lines, every map (id, line,
expected origin / spacing / extent), the scene.vtp elements (name, index, vertex count,
optionally their vertices or circle), and, for a scene whose only source is one circular
loop, that loop (centre, axis, radius, current lines) for the closed-form check.

What is checked, per map file (every line of a `line = "all"` map, found through its
.pvd):
  * vtkXMLImageDataReader opens it without an error or warning;
  * origin, spacing, extent as expected (origin/spacing to binary32 rounding);
  * point arrays B_re, B_im (3 components) and B_rms (1), Float64, one tuple per point;
  * field data frequency_hz = the line's frequency;
  * B_rms = sqrt(|B_re|^2 + |B_im|^2) / sqrt(2);
  * B at every grid point = `strayflux probe --json` at the same point, the points taken
    from the file's own origin and spacing (origin + i * spacing in double);
  * for a single-loop scene, B = the loop's closed-form field at every grid point at
    least 0.1 R from the wire.
Per .pvd: parsed with xml.etree; one DataSet per line, timestep = that line's frequency
(Hz), every file exists and opens. scene.vtp: vtkXMLPolyDataReader opens it; one polyline
cell per wire and per victim; cell data `element` with each element's index; field data
naming them; the vertex counts (and vertices where given).

Exits 1 with one message per mismatch, 2 on a bad invocation; prints what it checked.
Only the standard library and the `vtk` package are used.
"""

import json
import math
import os
import struct
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

from vtkmodules.vtkCommonCore import VTK_DOUBLE, vtkIdList, vtkOutputWindow, vtkStringOutputWindow
from vtkmodules.vtkIOXML import vtkXMLImageDataReader, vtkXMLPolyDataReader

# Vacuum permeability, H/m: CODATA 2018 recommended value (Tiesinga, Mohr, Newell &
# Taylor, Rev. Mod. Phys. 93, 025010 (2021)).
MU0 = 1.25663706212e-6

# IEEE 754-2008 binary32 has a 24-bit significand: rounding a double to it moves the
# value by at most 2^-24 relative. The stored origin/spacing pass through binary32 and a
# shortest decimal; allow twice that.
F32_REL = 2.0 ** -23

FAILURES = []
CHECKED = []


def fail(msg):
    FAILURES.append(msg)
    print("FAIL: " + msg)


def ok(msg):
    CHECKED.append(msg)
    print("ok:   " + msg)


# ---------------------------------------------------------------------------------------
# Closed form of a circular loop (the oracle, written here, independent of strayflux)
# ---------------------------------------------------------------------------------------


def ellip_ke(m):
    """Complete elliptic integrals K(m), E(m) of parameter m = k^2, 0 <= m < 1, by the
    arithmetic-geometric mean: Abramowitz & Stegun, Handbook of Mathematical Functions
    (1964), 17.6.1-17.6.4: a0 = 1, b0 = sqrt(1 - m), c0 = sqrt(m);
    a(n+1) = (a + b)/2, b(n+1) = sqrt(a b), c(n+1) = (a - b)/2 = c^2 / (4 a(n+1));
    K = pi / (2 a_N), (K - E)/K = (1/2) sum_n 2^n c_n^2. c is updated by the second form:
    (a - b)/2 stalls at rounding level, and the weight 2^n then grows it back."""
    a, b, c = 1.0, math.sqrt(1.0 - m), math.sqrt(m)
    s = 0.5 * c * c
    p = 0.5
    for _ in range(40):
        if c <= 1e-17 * a:
            break
        a, b, c = 0.5 * (a + b), math.sqrt(a * b), c * c / (2.0 * (a + b))
        p *= 2.0
        s += p * c * c
    k = math.pi / (2.0 * a)
    return k, k * (1.0 - s)


def loop_b_local(a, rho, z):
    """(B_rho, B_z) in T per ampere of a circular filament of radius a (m) in the plane
    z = 0, current counter-clockwise about +z, at cylindrical (rho, z).

    Simpson, Lane, Immer & Youngquist, "Simple Analytic Expressions for the Magnetic
    Field of a Circular Current Loop", NASA Technical Memorandum (2001); the same result
    as Smythe, "Static and Dynamic Electricity", 3rd ed. (1968), sec. 7.10. With
    r^2 = rho^2 + z^2, alpha^2 = a^2 + r^2 - 2 a rho, beta^2 = a^2 + r^2 + 2 a rho,
    k^2 = 1 - alpha^2/beta^2, C = mu0 I / pi:
      B_rho = C z / (2 alpha^2 beta rho) [(a^2 + r^2) E(k^2) - alpha^2 K(k^2)],
      B_z   = C / (2 alpha^2 beta)       [(a^2 - r^2) E(k^2) + alpha^2 K(k^2)].
    The transcription is confirmed at start-up by self_test_oracle()."""
    r2 = rho * rho + z * z
    alpha2 = a * a + r2 - 2.0 * a * rho
    beta2 = a * a + r2 + 2.0 * a * rho
    beta = math.sqrt(beta2)
    kk, ee = ellip_ke(1.0 - alpha2 / beta2)
    c = MU0 / math.pi
    bz = c / (2.0 * alpha2 * beta) * ((a * a - r2) * ee + alpha2 * kk)
    if rho < 1e-12 * a:
        return 0.0, bz
    brho = c * z / (2.0 * alpha2 * beta * rho) * ((a * a + r2) * ee - alpha2 * kk)
    return brho, bz


def loop_b_quadrature(a, rho, z, n=2048):
    """(B_rho, B_z) per ampere by direct Biot-Savart integration over the exact circle,
    dB = mu0 I / 4 pi dl x (r - r') / |r - r'|^3 (Jackson, Classical Electrodynamics,
    3rd ed., eq. 5.4), with the n-point periodic trapezoidal rule, which converges
    geometrically for smooth periodic integrands (Trefethen & Weideman, "The
    exponentially convergent trapezoidal rule", SIAM Review 56, 385 (2014)).
    The field point is (rho, 0, z)."""
    bx = bz = 0.0
    h = 2.0 * math.pi / n
    for i in range(n):
        t = i * h
        sx, sy = a * math.cos(t), a * math.sin(t)
        dlx, dly = -a * math.sin(t) * h, a * math.cos(t) * h
        rx, ry, rz = rho - sx, -sy, z
        r3 = (rx * rx + ry * ry + rz * rz) ** 1.5
        bx += (dly * rz) / r3
        bz += (dlx * ry - dly * rx) / r3
    k = MU0 / (4.0 * math.pi)
    return k * bx, k * bz


def self_test_oracle():
    """Confirms the closed form before trusting it."""
    # Legendre's relation E K' + E' K - K K' = pi/2 (A&S 17.3.13), m' = 1 - m.
    for m in (0.1, 0.5, 0.9):
        k1, e1 = ellip_ke(m)
        k2, e2 = ellip_ke(1.0 - m)
        err = abs(e1 * k2 + e2 * k1 - k1 * k2 - math.pi / 2.0)
        if err > 1e-14:
            fail("oracle: AGM K/E break Legendre's relation at m=%g by %.2e" % (m, err))
            return
    a = 0.02
    # On the axis, B_z = mu0 I a^2 / (2 (a^2 + z^2)^(3/2)) (Griffiths, Introduction to
    # Electrodynamics, 4th ed., Example 5.6).
    for z in (0.0, 0.013, -0.05):
        want = MU0 * a * a / (2.0 * (a * a + z * z) ** 1.5)
        got = loop_b_local(a, 0.0, z)[1]
        if abs(got - want) > 1e-13 * want:
            fail("oracle: on-axis B_z at z=%g is %.15e, law gives %.15e" % (z, got, want))
            return
    worst = 0.0
    for rho, z in ((0.005, 0.004), (0.018, 0.002), (0.03, -0.01), (0.022, 0.0), (0.05, 0.04)):
        br, bz = loop_b_local(a, rho, z)
        qr, qz = loop_b_quadrature(a, rho, z)
        worst = max(worst, math.hypot(br - qr, bz - qz) / math.hypot(qr, qz))
    if worst > 1e-10:
        fail("oracle: closed form and Biot-Savart quadrature differ by %.2e" % worst)
        return
    ok("closed-form loop field: Legendre relation, on-axis law, quadrature (worst %.1e)" % worst)


# ---------------------------------------------------------------------------------------
# Reading
# ---------------------------------------------------------------------------------------

LOG = vtkStringOutputWindow()
vtkOutputWindow.SetInstance(LOG)


def read_xml(reader_class, path):
    """Reads a VTK XML file; returns the data set, or None after recording why not."""
    if not os.path.isfile(path):
        fail("%s: file missing" % path)
        return None
    before = len(LOG.GetOutput() or "")
    reader = reader_class()
    if not reader.CanReadFile(path):
        fail("%s: %s says it cannot read this file" % (path, reader_class.__name__))
        return None
    reader.SetFileName(path)
    reader.Update()
    text = (LOG.GetOutput() or "")[before:].strip()
    if text:
        fail("%s: VTK reported while reading: %s" % (path, " | ".join(text.splitlines())))
        return None
    return reader.GetOutput()


def as_f32(x):
    return struct.unpack("<f", struct.pack("<f", x))[0]


def close_rel(got, want, rel):
    return abs(got - want) <= rel * abs(want) + 1e-300


# ---------------------------------------------------------------------------------------
# Maps
# ---------------------------------------------------------------------------------------


class MapFile:
    """One .vti as read: grid, arrays, and the grid points computed from it."""

    def __init__(self, path, img):
        self.path = path
        self.origin = img.GetOrigin()
        self.spacing = img.GetSpacing()
        self.extent = img.GetExtent()
        self.dims = [self.extent[2 * a + 1] - self.extent[2 * a] + 1 for a in range(3)]
        self.n = self.dims[0] * self.dims[1] * self.dims[2]
        self.img = img

    def index(self, pid):
        nx, ny = self.dims[0], self.dims[1]
        return pid % nx, (pid // nx) % ny, pid // (nx * ny)

    def point(self, pid, origin=None, spacing=None):
        o = self.origin if origin is None else origin
        s = self.spacing if spacing is None else spacing
        ijk = self.index(pid)
        return tuple(o[a] + (self.extent[2 * a] + ijk[a]) * s[a] for a in range(3))


def check_grid(mf, spec):
    name = os.path.basename(mf.path)
    good = True
    for a in range(3):
        if not close_rel(mf.origin[a], spec["origin_m"][a], F32_REL):
            fail("%s: origin[%d] = %r, expected %r" % (name, a, mf.origin[a], spec["origin_m"][a]))
            good = False
        if not close_rel(mf.spacing[a], spec["spacing_m"][a], F32_REL):
            fail("%s: spacing[%d] = %r, expected %r" % (name, a, mf.spacing[a], spec["spacing_m"][a]))
            good = False
    if list(mf.extent) != list(spec["extent"]):
        fail("%s: extent %s, expected %s" % (name, list(mf.extent), spec["extent"]))
        good = False
    if mf.img.GetNumberOfPoints() != mf.n:
        fail("%s: %d points, extent implies %d" % (name, mf.img.GetNumberOfPoints(), mf.n))
        good = False
    if good:
        ok("%s: origin %s, spacing %s, extent %s" % (
            name, fmt3(mf.origin), fmt3(mf.spacing), list(mf.extent)))
    return good


def fmt3(v):
    return "(" + ", ".join("%.9g" % x for x in v) + ")"


def get_arrays(mf):
    """B_re, B_im, B_rms as lists of tuples, or None after recording why not."""
    pd = mf.img.GetPointData()
    name = os.path.basename(mf.path)
    out = {}
    for arr_name, comps in (("B_re", 3), ("B_im", 3), ("B_rms", 1)):
        arr = pd.GetArray(arr_name)
        if arr is None:
            have = [pd.GetArrayName(i) for i in range(pd.GetNumberOfArrays())]
            fail("%s: no point array %s (has %s)" % (name, arr_name, have))
            return None
        if arr.GetNumberOfComponents() != comps:
            fail("%s: %s has %d components, expected %d" % (
                name, arr_name, arr.GetNumberOfComponents(), comps))
            return None
        if arr.GetNumberOfTuples() != mf.n:
            fail("%s: %s has %d tuples, expected %d" % (name, arr_name, arr.GetNumberOfTuples(), mf.n))
            return None
        # Float64 is what the 1e-12 comparisons below need.
        if arr.GetDataType() != VTK_DOUBLE:
            fail("%s: %s is %s, expected Float64" % (name, arr_name, arr.GetDataTypeAsString()))
            return None
        out[arr_name] = [arr.GetTuple(i) for i in range(mf.n)]
    ok("%s: B_re, B_im (3 comp.), B_rms (1 comp.), Float64, %d tuples each" % (name, mf.n))
    return out


def check_frequency_field(mf, freq):
    name = os.path.basename(mf.path)
    arr = mf.img.GetFieldData().GetArray("frequency_hz")
    if arr is None:
        fail("%s: no field data frequency_hz" % name)
    elif arr.GetValue(0) != freq:
        fail("%s: frequency_hz = %r, expected %r" % (name, arr.GetValue(0), freq))
    else:
        ok("%s: field data frequency_hz = %g" % (name, freq))


def check_rms(mf, arrays):
    worst = 0.0
    for re, im, rms in zip(arrays["B_re"], arrays["B_im"], arrays["B_rms"]):
        want = math.sqrt(sum(x * x for x in re) + sum(x * x for x in im)) / math.sqrt(2.0)
        worst = max(worst, abs(rms[0] - want) / max(want, 1e-300))
    # rms of a sinusoid of peak phasor B: |B| / sqrt(2) (docs/model.md; and the
    # definition of rms). A few roundings apart at most.
    if worst > 1e-14:
        fail("%s: B_rms differs from sqrt(|B_re|^2+|B_im|^2)/sqrt(2) by %.2e relative" % (
            os.path.basename(mf.path), worst))
    else:
        ok("%s: B_rms = |B|/sqrt(2) (worst %.1e)" % (os.path.basename(mf.path), worst))


def phasor_rel_diff(re, im, want):
    """|B - want| / |want| over the complex 3-vector; want = [(re, im)] * 3."""
    d = 0.0
    n = 0.0
    for c in range(3):
        d += (re[c] - want[c][0]) ** 2 + (im[c] - want[c][1]) ** 2
        n += want[c][0] ** 2 + want[c][1] ** 2
    return math.sqrt(d) / max(math.sqrt(n), 1e-300)


# ---------------------------------------------------------------------------------------
# Probe comparison
# ---------------------------------------------------------------------------------------


def run_probe(exp, points):
    """`strayflux probe --points CSV --json` at `points`; returns the list of points."""
    with tempfile.TemporaryDirectory() as tmp:
        csv = os.path.join(tmp, "points.csv")
        with open(csv, "w") as f:
            f.write("x,y,z\n")
            for p in points:
                f.write("%r,%r,%r\n" % p)
        cmd = [exp["binary"], "probe", exp["scene"], "--points", csv, "--json"]
        res = subprocess.run(cmd, capture_output=True, text=True)
    if res.returncode != 0:
        fail("probe exited %d: %s" % (res.returncode, res.stderr.strip()))
        return None
    got = json.loads(res.stdout)["points"]
    if len(got) != len(points):
        fail("probe returned %d points for %d asked" % (len(got), len(points)))
        return None
    for p, g in zip(points, got):
        if tuple(g["position_m"]) != p:
            fail("probe echoed point %r for %r" % (g["position_m"], p))
            return None
    return got


def probe_line(probe_point, freq):
    for line in probe_point["lines"]:
        if close_rel(line["frequency_hz"], freq, 1e-12):
            return line
    return None


# ---------------------------------------------------------------------------------------
# Closed form comparison
# ---------------------------------------------------------------------------------------


def unit(v):
    n = math.sqrt(sum(x * x for x in v))
    return [x / n for x in v]


def loop_phasor(loop, freq, p, near):
    """B phasor [(re, im)] * 3 of the scene's loop at p for the line at freq, and the
    point's distance from the wire; the phasor is None when the loop has no line at freq
    or the point is nearer than `near` to the wire."""
    cur = None
    for line in loop["lines"]:
        if close_rel(line["frequency_hz"], freq, 1e-12):
            ph = math.radians(line["phase_deg"])
            cur = (line["peak_a"] * math.cos(ph), line["peak_a"] * math.sin(ph))
    if cur is None:
        return None, None
    n = unit(loop["axis"])
    d = [p[a] - loop["center_m"][a] for a in range(3)]
    z = sum(d[a] * n[a] for a in range(3))
    rv = [d[a] - z * n[a] for a in range(3)]
    rho = math.sqrt(sum(x * x for x in rv))
    a = loop["radius_m"]
    dist = math.hypot(rho - a, z)
    if dist < near:
        return None, dist
    br, bz = loop_b_local(a, rho, z)
    rhat = [x / rho for x in rv] if rho > 1e-12 * a else [0.0, 0.0, 0.0]
    b = [br * rhat[c] + bz * n[c] for c in range(3)]
    return [(cur[0] * b[c], cur[1] * b[c]) for c in range(3)], dist


# ---------------------------------------------------------------------------------------
# Per-scene driver
# ---------------------------------------------------------------------------------------


def map_files(exp, spec):
    """[(path, frequency_hz)] of one map: its .vti, or every line of its .pvd."""
    out_dir = exp["out_dir"]
    lines_hz = exp["lines_hz"]
    if spec["line"] != "all":
        return [(os.path.join(out_dir, spec["id"] + ".vti"), lines_hz[spec["line"] - 1])]
    pvd = os.path.join(out_dir, spec["id"] + ".pvd")
    if not os.path.isfile(pvd):
        fail("%s: missing (line = \"all\" writes a collection)" % pvd)
        return []
    root = ET.parse(pvd).getroot()
    if root.tag != "VTKFile" or root.get("type") != "Collection":
        fail("%s: root is <%s type=%r>, expected <VTKFile type=\"Collection\">" % (
            pvd, root.tag, root.get("type")))
        return []
    sets = root.findall("./Collection/DataSet")
    files = []
    for ds in sets:
        files.append((os.path.join(os.path.dirname(pvd), ds.get("file")), float(ds.get("timestep"))))
    steps = [f for _, f in files]
    if len(steps) != len(lines_hz) or any(not close_rel(s, f, 1e-12) for s, f in zip(steps, lines_hz)):
        fail("%s: timesteps %s, expected the line frequencies %s" % (pvd, steps, lines_hz))
    else:
        ok("%s: %d datasets, timesteps = line frequencies %s Hz" % (
            os.path.basename(pvd), len(files), steps))
    if len(set(p for p, _ in files)) != len(files):
        fail("%s: a file is listed twice" % pvd)
    return files


def check_scene(exp):
    tol_probe = exp["probe_rel_tol"]
    tol_cf = exp["closed_form_rel_tol"]
    loaded = []  # (MapFile, arrays, frequency)
    for spec in exp["maps"]:
        for path, freq in map_files(exp, spec):
            img = read_xml(vtkXMLImageDataReader, path)
            if img is None:
                continue
            mf = MapFile(path, img)
            if not check_grid(mf, spec):
                continue
            arrays = get_arrays(mf)
            if arrays is None:
                continue
            check_frequency_field(mf, freq)
            check_rms(mf, arrays)
            loaded.append((mf, arrays, freq))
    if not loaded:
        fail("no map file could be checked")
        return

    # The points from each file's own origin and spacing, one probe run for all.
    points = []
    for mf, _, _ in loaded:
        points.extend(mf.point(pid) for pid in range(mf.n))
    probed = run_probe(exp, points)
    if probed is not None:
        base = 0
        for mf, arrays, freq in loaded:
            check_against_probe(mf, arrays, freq, probed[base:base + mf.n], tol_probe)
            base += mf.n
        diagnose_f32_origin(exp, loaded, probed)

    loop = exp.get("loop")
    if loop is not None:
        for mf, arrays, freq in loaded:
            check_against_loop(mf, arrays, freq, loop, tol_cf)
    check_polydata(exp)


def check_against_probe(mf, arrays, freq, probed, tol):
    name = os.path.basename(mf.path)
    worst, worst_pid, worst_rms = 0.0, 0, 0.0
    for pid in range(mf.n):
        line = probe_line(probed[pid], freq)
        if line is None:
            fail("%s: probe has no line at %g Hz" % (name, freq))
            return
        d = phasor_rel_diff(arrays["B_re"][pid], arrays["B_im"][pid], line["b_t_peak"])
        if d > worst:
            worst, worst_pid = d, pid
        r = abs(arrays["B_rms"][pid][0] - line["b_t_rms"]) / max(line["b_t_rms"], 1e-300)
        worst_rms = max(worst_rms, r)
    msg = "%s: B vs probe at the file's %d grid points: worst %.2e relative (at %s), B_rms %.2e" % (
        name, mf.n, worst, fmt3(mf.point(worst_pid)), worst_rms)
    if worst > tol or worst_rms > tol:
        fail(msg + ", allowed %.0e" % tol)
    else:
        ok(msg)
    RESULTS.setdefault("probe", []).append(max(worst, worst_rms))


def diagnose_f32_origin(exp, loaded, probed):
    """When the file's grid and the probe disagree, tells whether the cause is where the
    points are: probes again at the grid re-computed from the binary32 values of the
    stored origin and spacing, and reports how far apart the two grids are."""
    if not any("vs probe" in f for f in FAILURES):
        return
    worst_pos = 0.0
    points = []
    for mf, _, _ in loaded:
        o32 = [as_f32(x) for x in mf.origin]
        s32 = [as_f32(x) for x in mf.spacing]
        for pid in range(mf.n):
            p, q = mf.point(pid), mf.point(pid, o32, s32)
            worst_pos = max(worst_pos, max(abs(p[a] - q[a]) for a in range(3)))
            points.append(q)
    probed32 = run_probe(exp, points)
    if probed32 is None:
        return
    worst, base = 0.0, 0
    for mf, arrays, freq in loaded:
        for pid in range(mf.n):
            line = probe_line(probed32[base + pid], freq)
            worst = max(worst, phasor_rel_diff(arrays["B_re"][pid], arrays["B_im"][pid], line["b_t_peak"]))
        base += mf.n
    print("diagnosis: the file's grid points (origin + i*spacing from the stored text, as "
          "VTK reads it) and the grid from the binary32 values of those numbers differ by "
          "up to %.2e m; at the binary32 grid, B and probe differ by %.2e relative. "
          "So the map was computed at points other than the ones the file describes."
          % (worst_pos, worst))


def check_against_loop(mf, arrays, freq, loop, tol):
    name = os.path.basename(mf.path)
    near = loop["radius_m"] * 0.1
    worst, worst_pid, used, skipped = 0.0, 0, 0, 0
    for pid in range(mf.n):
        p = mf.point(pid)
        want, dist = loop_phasor(loop, freq, p, near)
        if dist < near:
            skipped += 1
            continue
        if want is None:
            fail("%s: the loop has no line at %g Hz" % (name, freq))
            return
        used += 1
        d = phasor_rel_diff(arrays["B_re"][pid], arrays["B_im"][pid], want)
        if d > worst:
            worst, worst_pid = d, pid
    msg = ("%s: B vs closed-form loop field at %d points >= 0.1 R from the wire (%d nearer "
           "skipped): worst %.2e relative (at %s)" % (name, used, skipped, worst, fmt3(mf.point(worst_pid))))
    if used == 0:
        fail("%s: no grid point at least 0.1 R from the wire" % name)
    elif worst > tol:
        fail(msg + ", allowed %.0e" % tol)
        print("diagnosis: %s: at the grid from the binary32 values of the stored origin and "
              "spacing, B vs closed form is %.2e relative" % (
                  name, closed_form_at_f32_grid(mf, arrays, freq, loop, near)))
    else:
        ok(msg)
    RESULTS.setdefault("closed_form", []).append(worst)


def closed_form_at_f32_grid(mf, arrays, freq, loop, near):
    o32 = [as_f32(x) for x in mf.origin]
    s32 = [as_f32(x) for x in mf.spacing]
    worst = 0.0
    for pid in range(mf.n):
        want, dist = loop_phasor(loop, freq, mf.point(pid, o32, s32), near)
        if want is not None:
            worst = max(worst, phasor_rel_diff(arrays["B_re"][pid], arrays["B_im"][pid], want))
    return worst


# ---------------------------------------------------------------------------------------
# scene.vtp
# ---------------------------------------------------------------------------------------


def check_polydata(exp):
    path = os.path.join(exp["out_dir"], "scene.vtp")
    poly = read_xml(vtkXMLPolyDataReader, path)
    if poly is None:
        return
    elements = exp["elements"]
    if poly.GetNumberOfLines() != len(elements):
        fail("scene.vtp: %d polyline cells, expected %d (one per wire and per victim)" % (
            poly.GetNumberOfLines(), len(elements)))
    if poly.GetNumberOfVerts() or poly.GetNumberOfStrips() or poly.GetNumberOfPolys() != exp.get("shields", 0):
        fail("scene.vtp: unexpected verts/strips/polys (%d/%d/%d)" % (
            poly.GetNumberOfVerts(), poly.GetNumberOfStrips(), poly.GetNumberOfPolys()))
    arr = poly.GetCellData().GetArray("element")
    if arr is None:
        fail("scene.vtp: no cell array `element`")
        return
    cells = {}
    ids = vtkIdList()
    for c in range(poly.GetNumberOfCells()):
        if poly.GetCellType(c) not in (3, 4):  # VTK_LINE, VTK_POLY_LINE
            continue
        poly.GetCellPoints(c, ids)
        pts = [poly.GetPoint(ids.GetId(k)) for k in range(ids.GetNumberOfIds())]
        cells.setdefault(int(arr.GetTuple1(c)), []).append(pts)
    fd = poly.GetFieldData()
    for el in elements:
        name = el["name"]
        fa = fd.GetArray(name)
        if fa is None:
            fail("scene.vtp: no field data %s" % name)
        elif int(fa.GetTuple1(0)) != el["index"]:
            fail("scene.vtp: field data %s = %d, expected %d" % (name, fa.GetTuple1(0), el["index"]))
        mine = cells.get(el["index"], [])
        if len(mine) != 1:
            fail("scene.vtp: %d cells with element = %d (%s), expected 1" % (len(mine), el["index"], name))
            continue
        pts = mine[0]
        if len(pts) != el["points"]:
            fail("scene.vtp: %s has %d vertices, expected %d" % (name, len(pts), el["points"]))
            continue
        if not check_element_shape(name, el, pts):
            continue
        ok("scene.vtp: %s is one polyline, element = %d, %d vertices%s" % (
            name, el["index"], len(pts), el.get("shape_note", "")))


def check_element_shape(name, el, pts):
    size = el.get("size_m", 1.0)
    if el.get("closed") and max(abs(pts[0][a] - pts[-1][a]) for a in range(3)) > 1e-12 * size:
        fail("scene.vtp: %s is not closed: first %s, last %s" % (name, pts[0], pts[-1]))
        return False
    if "vertices_m" in el:
        for v in el["vertices_m"]:
            if min(max(abs(p[a] - v[a]) for a in range(3)) for p in pts) > 1e-12 * size:
                fail("scene.vtp: %s has no vertex at %s" % (name, v))
                return False
        el["shape_note"] = ", at the expected corners"
    if "circle" in el:
        c = el["circle"]
        n = unit(c["axis"])
        worst_plane = worst_r = 0.0
        for p in pts:
            d = [p[a] - c["center_m"][a] for a in range(3)]
            z = sum(d[a] * n[a] for a in range(3))
            r = math.sqrt(max(sum(x * x for x in d) - z * z, 0.0))
            worst_plane = max(worst_plane, abs(z))
            worst_r = max(worst_r, abs(r - c["radius_m"]) / c["radius_m"])
        # Points on the circle: in its plane to rounding, at its radius to 1e-3 (a chord
        # polygon's vertices may sit slightly outside to keep the enclosed area).
        if worst_plane > 1e-12 * c["radius_m"] or worst_r > 1e-3:
            fail("scene.vtp: %s leaves its circle: %.2e m off the plane, %.2e off the radius" % (
                name, worst_plane, worst_r))
            return False
        el["shape_note"] = ", on its circle (radius within %.1e)" % worst_r
    return True


RESULTS = {}


def main():
    if len(sys.argv) != 2:
        print(__doc__.splitlines()[2], file=sys.stderr)
        sys.exit(2)
    with open(sys.argv[1]) as f:
        exp = json.load(f)
    print("checking %s (scene %s)" % (exp["out_dir"], exp["scene"]))
    self_test_oracle()
    check_scene(exp)
    summary = {k: max(v) for k, v in RESULTS.items()}
    print("summary: %d checks passed, %d failed; worst relative differences %s" % (
        len(CHECKED), len(FAILURES), json.dumps(summary)))
    if FAILURES:
        print("%d mismatch(es) in %s:" % (len(FAILURES), exp["out_dir"]), file=sys.stderr)
        for f in FAILURES:
            print("  " + f, file=sys.stderr)
        sys.exit(1)


if __name__ == "__main__":
    main()
