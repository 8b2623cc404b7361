# paraview_view.py - renders docs/images/paraview-view.png, the picture in docs/paraview.md: what the
# coaxial-loops demo looks like once its strayflux output is opened in ParaView.
#
# The picture shows the box map around-loops.vti cut by a Slice through the loops' common
# axis (the plane y = 0), coloured by B_rms on a logarithmic colour scale, with arrows from a
# Glyph filter giving the direction of B_re in that plane. The loops from scene.vtp are drawn
# as thick lines, coloured by their `element` index.
#
# Run it from the crate root (it needs Debian's paraview / python3-paraview, and xvfb):
#
#   cargo run --release -- map scenes/coaxial-loops.toml --out /tmp/pvpic
#   xvfb-run -a -s "-screen 0 1024x768x24" pvbatch --force-offscreen-rendering \
#       docs/paraview_view.py /tmp/pvpic
#
# The argument is the folder that `strayflux map` wrote. A second argument, if given, is the
# PNG to write instead of docs/images/paraview-view.png (that default is found relative to
# this script, so it works from any directory).

import math
import os
import sys

from paraview.simple import (
    ColorBy,
    CreateView,
    ExtractSubset,
    GetColorTransferFunction,
    GetScalarBar,
    Glyph,
    Render,
    SaveScreenshot,
    SetActiveView,
    Show,
    Slice,
    Text,
    XMLImageDataReader,
    XMLPolyDataReader,
    servermanager,
)

SIZE = [1000, 700]
BLACK = [0.0, 0.0, 0.0]

# Colour range of B_rms on the slice (T). Fixed rather than automatic so that the picture
# does not change when the data range shifts a little; the slice spans about 1e-6 .. 9e-5 T.
B_MIN, B_MAX = 1e-6, 1e-4

# One colour per element of scene.vtp, by its `element` index (source first, then victims).
ELEMENT_COLOURS = [
    [0.0, 0.62, 0.0],  # green
    [0.80, 0.0, 0.80],  # magenta
    [1.0, 0.55, 0.0],  # orange
    [0.0, 0.0, 0.0],  # black
]


def usage():
    sys.exit("usage: pvbatch paraview_view.py MAP_FOLDER [OUT.png]")


def element_labels(scene):
    """Legend labels from scene.vtp's field data: arrays named 'source:drive', 'victim:pickup'
    hold the `element` index of each wire or loop."""
    data = servermanager.Fetch(scene)
    fields = data.GetFieldData()
    labels = {}
    for i in range(fields.GetNumberOfArrays()):
        name = fields.GetArrayName(i) or ""
        role, _, ident = name.partition(":")
        if ident and role in ("source", "victim"):
            labels[int(fields.GetArray(i).GetTuple1(0))] = "%s (%s)" % (ident, role)
    return labels


def colour_bar_title():
    # ParaView 5.11 renders text through matplotlib when it can, and there a bare '|'
    # separates table columns ("|B|" comes out as "B"); \vert draws the bar instead.
    try:
        import matplotlib  # noqa: F401

        return r"$\vert\mathrm{B}\vert$ rms (T)"
    except ImportError:
        return "|B| rms (T)"


def main():
    if len(sys.argv) not in (2, 3):
        usage()
    folder = sys.argv[1]
    here = os.path.dirname(os.path.abspath(__file__))
    png = sys.argv[2] if len(sys.argv) == 3 else os.path.join(here, "images", "paraview-view.png")
    box_file = os.path.join(folder, "around-loops.vti")
    scene_file = os.path.join(folder, "scene.vtp")
    for f in (box_file, scene_file):
        if not os.path.isfile(f):
            sys.exit("missing %s (run `strayflux map scenes/coaxial-loops.toml --out %s`)" % (f, folder))

    view = CreateView("RenderView")
    SetActiveView(view)
    view.ViewSize = SIZE
    view.UseColorPaletteForBackground = 0
    view.Background = [1.0, 1.0, 1.0]
    view.OrientationAxesVisibility = 0  # the labelled axes on the slice say it all

    box = XMLImageDataReader(FileName=[box_file])
    scene = XMLPolyDataReader(FileName=[scene_file])

    # --- Slice through the common axis (z), plane y = 0, coloured by B_rms (log scale).
    cut = Slice(Input=box)
    cut.SliceType = "Plane"
    cut.SliceType.Origin = [0.0, 0.0, 0.0]
    cut.SliceType.Normal = [0.0, 1.0, 0.0]
    cut_display = Show(cut, view)
    ColorBy(cut_display, ("POINTS", "B_rms"))

    lut = GetColorTransferFunction("B_rms")
    lut.ApplyPreset("Cool to Warm", True)
    lut.AutomaticRescaleRangeMode = "Never"
    lut.RescaleTransferFunction(B_MIN, B_MAX)
    lut.MapControlPointsToLogSpace()
    lut.UseLogScale = 1

    bar = GetScalarBar(lut, view)
    bar.Title = colour_bar_title()
    bar.ComponentTitle = ""
    bar.TitleColor = BLACK
    bar.LabelColor = BLACK
    bar.TitleFontSize = 20
    bar.LabelFontSize = 17
    bar.RangeLabelFormat = "%.0e"
    bar.WindowLocation = "Any Location"
    bar.Position = [0.875, 0.17]
    bar.ScalarBarLength = 0.66
    bar.ScalarBarThickness = 18
    cut_display.SetScalarBarVisibility(view, True)

    # Axes with coordinates (metres, as in the files) along the bottom and left edges.
    grid = cut_display.DataAxesGrid
    grid.GridAxesVisibility = 1
    grid.XTitle = "x (m)"
    grid.YTitle = ""
    grid.ZTitle = "z (m)"
    grid.FacesToRender = 2 + 16  # the two y faces, which for a flat slice are the slice
    grid.AxesToLabel = 1 + 4  # labels on the min-x (left) and min-z (bottom) edges only
    grid.XAxisUseCustomLabels = 1
    grid.XAxisLabels = [-0.04, -0.02, 0.0, 0.02, 0.04]
    grid.ZAxisUseCustomLabels = 1
    grid.ZAxisLabels = [-0.02, -0.01, 0.0, 0.01, 0.02, 0.03]
    for axis in "XYZ":
        setattr(grid, axis + "TitleColor", BLACK)
        setattr(grid, axis + "LabelColor", BLACK)
        setattr(grid, axis + "TitleFontSize", 18)
        setattr(grid, axis + "LabelFontSize", 16)
    grid.GridColor = [0.35, 0.35, 0.35]

    # --- Arrows: direction of B_re on the y = 0 grid plane (the plane the Slice cuts),
    # every second grid point (4 mm apart), all the same length so that the weak field far
    # from the loops still shows its direction; the colour under them gives the strength.
    # ExtractSubset picks that grid plane exactly, so the arrows sit on a regular lattice.
    plane = ExtractSubset(Input=box)
    plane.VOI = [0, 40, 20, 20, 0, 25]  # index j = 20 is y = 0 (origin -40 mm, step 2 mm)
    plane.SampleRateI = 2
    plane.SampleRateK = 2
    arrows = Glyph(Input=plane, GlyphType="Arrow")
    arrows.OrientationArray = ["POINTS", "B_re"]
    arrows.ScaleArray = ["POINTS", "No scale array"]
    arrows.ScaleFactor = 0.0033
    arrows.GlyphMode = "All Points"
    arrows.GlyphType.TipLength = 0.38
    arrows.GlyphType.TipRadius = 0.14
    arrows.GlyphType.ShaftRadius = 0.045
    arrow_display = Show(arrows, view)
    ColorBy(arrow_display, None)
    arrow_display.AmbientColor = BLACK
    arrow_display.DiffuseColor = BLACK

    # --- Source wires and victim loops from scene.vtp, thick lines coloured by `element`.
    labels = element_labels(scene)
    wires = Show(scene, view)
    ColorBy(wires, ("CELLS", "element"))
    wires.LineWidth = 3.0
    wires.RenderLinesAsTubes = 1
    elements = GetColorTransferFunction("element")
    elements.InterpretValuesAsCategories = 1
    annotations, colours = [], []
    for n, index in enumerate(sorted(labels)):
        annotations += [str(index), labels[index]]
        colours += ELEMENT_COLOURS[n % len(ELEMENT_COLOURS)]
    elements.Annotations = annotations
    elements.IndexedColors = colours
    legend = GetScalarBar(elements, view)
    legend.Title = ""
    legend.ComponentTitle = ""
    legend.LabelColor = BLACK
    legend.LabelFontSize = 17
    legend.TextPosition = "Ticks left/bottom, annotations right/top"
    legend.WindowLocation = "Any Location"
    legend.Position = [0.03, 0.83]
    legend.ScalarBarLength = 0.12
    legend.ScalarBarThickness = 18
    wires.SetScalarBarVisibility(view, True)

    note = Text(Text="Slice y = 0 of around-loops.vti, arrows: direction of B_re")
    note_display = Show(note, view)
    note_display.Color = BLACK
    note_display.FontSize = 17
    note_display.WindowLocation = "Upper Right Corner"

    # --- Camera: looking along the slice normal (+y), z up, tilted 12 degrees down so the
    # loops show as thin ellipses (their near halves in front of the slice) instead of as
    # flat lines. Parallel projection keeps the slice undistorted.
    Render(view)  # the first render resets the camera, so place it afterwards
    tilt = math.radians(12.0)
    centre = [0.007, 0.0, 0.007]
    view.CameraParallelProjection = 1
    view.CameraFocalPoint = centre
    view.CameraViewUp = [0.0, math.sin(tilt), math.cos(tilt)]
    view.CameraPosition = [centre[0], -0.5 * math.cos(tilt), centre[2] + 0.5 * math.sin(tilt)]
    view.CameraParallelScale = 0.040

    Render(view)
    os.makedirs(os.path.dirname(os.path.abspath(png)), exist_ok=True)
    SaveScreenshot(png, view, ImageResolution=SIZE)
    print("wrote " + png)


main()
