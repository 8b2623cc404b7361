//! VTK XML files for ParaView: `.vti` image data (field maps), `.vtp` poly data (the
//! scene's conductors and victims) and `.pvd` collections (one map per spectral line).
//!
//! `.vtp` files are written with the vtkio crate as zlib-compressed binary (base64
//! inline); vtkio has no field-data support, so the small `<FieldData>` blocks that name
//! things are inserted into its XML text. `.vti` maps, which can be large, are written
//! here directly: appended raw binary, zlib blocks compressed in parallel.

use crate::Scene;
use crate::field::Vec3;
use crate::model::MapSpec;
use num_complex::Complex64;
use vtkio::model::{
    Attribute, Attributes, ByteOrder, DataSet, PolyDataPiece, Version, VertexNumbers, Vtk,
};
use vtkio::xml::Compressor;

/// zlib level 1, the fastest: field maps are doubles that hardly compress (a 128³ map
/// is 85.6 MB at level 1 and 85.5 MB at level 6, which took 2.5 s longer to write).
const ZLIB_LEVEL: u32 = 1;

fn to_xml(vtk: Vtk) -> Result<String, String> {
    vtk.try_into_xml_format(Compressor::ZLib, ZLIB_LEVEL)
        .map(|f| f.to_string())
        .map_err(|e| format!("cannot encode the VTK file: {e}"))
}

/// Inserts `<FieldData>` with one single-value array per (name, value) right after the
/// opening tag of the dataset element `element` (`ImageData`, `PolyData`).
fn with_field_data(xml: String, element: &str, fields: &[(String, String, &str)]) -> String {
    let open = format!("<{element}");
    let Some(start) = xml.find(&open) else {
        return xml;
    };
    let Some(end) = xml[start..].find('>') else {
        return xml;
    };
    let at = start + end + 1;
    let mut block = String::from("<FieldData>");
    for (name, value, ty) in fields {
        block.push_str(&format!(
            "<DataArray type=\"{ty}\" Name=\"{}\" NumberOfTuples=\"1\" format=\"ascii\">{value}</DataArray>",
            xml_escape(name)
        ));
    }
    block.push_str("</FieldData>");
    let mut out = xml;
    out.insert_str(at, &block);
    out
}

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Bytes per uncompressed block of the appended data (VTK's own default, 2^15).
const BLOCK: usize = 1 << 15;

/// One data array as VTK's zlib-compressed binary: a header of UInt64 words (number of
/// blocks, uncompressed block size, uncompressed size of a partial last block or 0,
/// then each block's compressed size) followed by the blocks, each compressed on its
/// own (in parallel; the bytes do not depend on the thread count).
fn compressed<F: Fn(usize) -> f64 + Sync>(count: usize, value: F) -> Result<Vec<u8>, String> {
    use flate2::{Compression, write::ZlibEncoder};
    use rayon::prelude::*;
    use std::io::Write;
    // The doubles are generated block by block, so no copy of the whole array is made.
    let per_block = BLOCK / 8;
    let blocks: Vec<Vec<u8>> = (0..count.div_ceil(per_block))
        .into_par_iter()
        .map(|k| {
            let range = k * per_block..((k + 1) * per_block).min(count);
            let mut raw = Vec::with_capacity(range.len() * 8);
            for i in range {
                raw.extend_from_slice(&value(i).to_le_bytes());
            }
            let mut e = ZlibEncoder::new(Vec::new(), Compression::new(ZLIB_LEVEL));
            e.write_all(&raw)?;
            e.finish()
        })
        .collect::<Result<_, std::io::Error>>()
        .map_err(|e| format!("cannot compress the VTK data: {e}"))?;
    let total = count * 8;
    let mut out = Vec::new();
    for word in [blocks.len(), BLOCK, total % BLOCK] {
        out.extend_from_slice(&(word as u64).to_le_bytes());
    }
    for b in &blocks {
        out.extend_from_slice(&(b.len() as u64).to_le_bytes());
    }
    for b in blocks {
        out.extend_from_slice(&b);
    }
    Ok(out)
}

/// A `.vti` of one line's field on the map grid: point data `B_re`, `B_im` (vectors, T,
/// peak phasor) and `B_rms` (rms of |B|, T), field data `frequency_hz`. Written here
/// (not with vtkio) as XML ImageData with appended raw binary data, zlib-compressed in
/// blocks compressed in parallel: for a 128³ map this took a third of the run with
/// vtkio's writer. Origin and spacing are written with every digit of the doubles the
/// map's grid uses.
pub fn image_data(spec: &MapSpec, frequency: f64, b: &[[Complex64; 3]]) -> Result<Vec<u8>, String> {
    let n = b.len();
    let arrays = [
        ("B_re", 3, compressed(3 * n, |i| b[i / 3][i % 3].re)?),
        ("B_im", 3, compressed(3 * n, |i| b[i / 3][i % 3].im)?),
        (
            "B_rms",
            1,
            compressed(n, |i| {
                (b[i].iter().map(|c| c.norm_sqr()).sum::<f64>() / 2.0).sqrt()
            })?,
        ),
    ];
    let [nx, ny, nz] = spec.points.map(|p| p - 1);
    let extent = format!("0 {nx} 0 {ny} 0 {nz}");
    let (o, d) = (spec.origin, spec.spacing);
    let mut xml = String::new();
    xml.push_str("<?xml version=\"1.0\"?>\n");
    xml.push_str(
        "<VTKFile type=\"ImageData\" version=\"1.0\" byte_order=\"LittleEndian\" \
         header_type=\"UInt64\" compressor=\"vtkZLibDataCompressor\">\n",
    );
    xml.push_str(&format!(
        "  <ImageData WholeExtent=\"{extent}\" Origin=\"{:?} {:?} {:?}\" Spacing=\"{:?} {:?} {:?}\">\n",
        o.x, o.y, o.z, d.x, d.y, d.z
    ));
    xml.push_str(&format!(
        "    <FieldData>\n      <DataArray type=\"Float64\" Name=\"frequency_hz\" \
         NumberOfTuples=\"1\" format=\"ascii\">{frequency:e}</DataArray>\n    </FieldData>\n"
    ));
    xml.push_str(&format!("    <Piece Extent=\"{extent}\">\n"));
    xml.push_str("      <PointData Scalars=\"B_rms\" Vectors=\"B_re\">\n");
    let mut offset = 0;
    for (name, components, data) in &arrays {
        xml.push_str(&format!(
            "        <DataArray type=\"Float64\" Name=\"{name}\" NumberOfComponents=\"{components}\" \
             format=\"appended\" offset=\"{offset}\"/>\n"
        ));
        offset += data.len();
    }
    xml.push_str("      </PointData>\n      <CellData>\n      </CellData>\n    </Piece>\n");
    xml.push_str("  </ImageData>\n  <AppendedData encoding=\"raw\">\n   _");
    let mut out = xml.into_bytes();
    out.reserve(offset + 40);
    for (_, _, data) in &arrays {
        out.extend_from_slice(data);
    }
    out.extend_from_slice(b"\n  </AppendedData>\n</VTKFile>\n");
    Ok(out)
}

/// Sample points of every victim edge: straight edges as they are, arcs every 1/64 turn.
fn victim_path(edges: &[crate::geometry::Edge]) -> Vec<Vec3> {
    let mut pts = Vec::new();
    for e in edges {
        let n = match e {
            crate::geometry::Edge::Line { .. } => 1,
            crate::geometry::Edge::Arc { start, end, .. } => {
                ((end - start).abs() / std::f64::consts::TAU * 64.0)
                    .ceil()
                    .max(1.0) as usize
            }
        };
        for k in 0..n {
            pts.push(e.point(k as f64 / n as f64));
        }
    }
    if let Some(&first) = pts.first() {
        pts.push(first);
    }
    pts
}

/// `scene.vtp`: every source wire and victim path as a polyline (cell data `element` =
/// the element's index, sources first, then victims, then shields and enclosures; point
/// dipoles as a short segment along their moment), with field data `source:<id>` /
/// `victim:<id>` / `shield:<id>` / `enclosure:<id>` = that index. A sheet is drawn as
/// its two faces, squares 1.5 times the size of the rest of the scene (the model's
/// sheet is infinite; sheets with `fitted = false` are left out); an enclosure as the
/// six faces of its box.
pub fn scene_polydata(scene: &Scene, dipole_length: f64) -> Result<String, String> {
    let (paths, mut names) = scene_paths(scene, dipole_length);
    let mut points = Vec::new();
    let mut connectivity = Vec::new();
    let mut offsets = Vec::new();
    let mut element = Vec::new();
    for (idx, path) in &paths {
        for p in path {
            connectivity.push((points.len() / 3) as u64);
            points.extend_from_slice(&[p.x, p.y, p.z]);
        }
        offsets.push(connectivity.len() as u64);
        element.push(*idx as i32);
    }
    // Shields as finite quads (cells after the lines, as VTK orders them).
    let first = scene.sources.len() + scene.victims.len();
    let polys = shield_polys(scene, &paths, first, &mut points, &mut element, &mut names);
    let vtk = Vtk {
        version: Version::new_xml(1, 0),
        title: String::new(),
        byte_order: ByteOrder::LittleEndian,
        file_path: None,
        data: DataSet::inline(PolyDataPiece {
            points: points.into(),
            verts: None,
            lines: Some(VertexNumbers::XML {
                connectivity,
                offsets,
            }),
            polys,
            strips: None,
            data: Attributes {
                point: vec![],
                cell: vec![Attribute::scalars("element", 1).with_data(element)],
            },
        }),
    };
    Ok(with_field_data(to_xml(vtk)?, "PolyData", &names))
}

/// Field-data entries: (name, value, VTK type).
type FieldNames = Vec<(String, String, &'static str)>;

/// Every source wire and victim path as (element index, vertices in m), point dipoles as
/// a segment `dipole_length` (m) long along their moment, with the field-data names of
/// the sources and victims.
fn scene_paths(scene: &Scene, dipole_length: f64) -> (Vec<(usize, Vec<Vec3>)>, FieldNames) {
    let mut paths: Vec<(usize, Vec<Vec3>)> = Vec::new();
    let mut names = Vec::new();
    for (i, s) in scene.sources.iter().enumerate() {
        for w in &s.conductors.wires {
            paths.push((i, w.vertices.clone()));
        }
        for d in &s.conductors.dipoles {
            let half = d.moment_per_amp.normalize() * (dipole_length / 2.0);
            paths.push((i, vec![d.position - half, d.position + half]));
        }
        names.push((format!("source:{}", s.id), i.to_string(), "Int32"));
    }
    let base = scene.sources.len();
    for (j, v) in scene.victims.iter().enumerate() {
        paths.push((base + j, victim_path(&v.edges)));
        names.push((format!("victim:{}", v.id), (base + j).to_string(), "Int32"));
    }
    (paths, names)
}

/// Sheets and enclosures as polygons numbered from element `first`: appends their
/// corners (m) to `points`, their indices to `element` and their names to `names`;
/// `None` when the scene has none.
fn shield_polys(
    scene: &Scene,
    paths: &[(usize, Vec<Vec3>)],
    first: usize,
    points: &mut Vec<f64>,
    element: &mut Vec<i32>,
    names: &mut FieldNames,
) -> Option<VertexNumbers> {
    let quads = shield_quads(scene, paths);
    let mut poly_conn = Vec::new();
    let mut poly_offsets = Vec::new();
    for (next, (name, faces)) in (first..).zip(quads) {
        for face in faces {
            for p in face {
                poly_conn.push((points.len() / 3) as u64);
                points.extend_from_slice(&[p.x, p.y, p.z]);
            }
            poly_offsets.push(poly_conn.len() as u64);
            element.push(next as i32);
        }
        names.push((name, next.to_string(), "Int32"));
    }
    (!poly_offsets.is_empty()).then_some(VertexNumbers::XML {
        connectivity: poly_conn,
        offsets: poly_offsets,
    })
}

/// Faces of every sheet and enclosure: (field-data name, quads of four corners in m).
fn shield_quads(scene: &Scene, paths: &[(usize, Vec<Vec3>)]) -> Vec<(String, Vec<[Vec3; 4]>)> {
    let all: Vec<Vec3> = paths.iter().flat_map(|p| p.1.iter().copied()).collect();
    let (centre, radius) = crate::field::sphere_around(all.iter()).unwrap_or((Vec3::zeros(), 0.0));
    let half = (1.5 * radius).max(0.01);
    let mut out = Vec::new();
    for sh in scene.shields.iter().filter(|s| s.fitted) {
        let u = crate::field::any_perpendicular(&sh.normal);
        let v = sh.normal.cross(&u);
        // The point of each face nearest the scene's centre.
        let foot = centre - sh.normal * (centre - sh.origin).dot(&sh.normal);
        let faces = [0.0, sh.thickness()]
            .iter()
            .map(|t| {
                let c = foot + sh.normal * *t;
                [
                    c + (u + v) * half,
                    c + (v - u) * half,
                    c - (u + v) * half,
                    c + (u - v) * half,
                ]
            })
            .collect();
        out.push((format!("shield:{}", sh.id), faces));
    }
    for e in &scene.enclosures {
        let f = &e.frame;
        let h = [
            f.x * (e.size.x / 2.0),
            f.y * (e.size.y / 2.0),
            f.z * (e.size.z / 2.0),
        ];
        let mut faces = Vec::new();
        for axis in 0..3 {
            let (a, b) = (h[(axis + 1) % 3], h[(axis + 2) % 3]);
            for sign in [-1.0, 1.0] {
                let c = f.origin + h[axis] * sign;
                faces.push([c + a + b, c - a + b, c - a - b, c + a - b]);
            }
        }
        out.push((format!("enclosure:{}", e.id), faces));
    }
    out
}

/// A `.pvd` collection: each (frequency Hz, file name) as a dataset whose time value is
/// the frequency, so ParaView's time control steps through the lines.
pub fn collection(entries: &[(f64, String)]) -> String {
    let mut s = String::from(
        "<?xml version=\"1.0\"?>\n<VTKFile type=\"Collection\" version=\"0.1\" byte_order=\"LittleEndian\">\n  <Collection>\n",
    );
    for (f, file) in entries {
        s.push_str(&format!(
            "    <DataSet timestep=\"{f:e}\" group=\"\" part=\"0\" file=\"{}\"/>\n",
            xml_escape(file)
        ));
    }
    s.push_str("  </Collection>\n</VTKFile>\n");
    s
}
