//! Bare numbers of implausible size: a bare TOML number is in SI base units, so
//! `radius = 8` is 8 metres. A bare length (or area) larger than its key's limit here
//! gets a warning that says how it was read; a string with a unit never does. The
//! table is documented in docs/scene-reference.md ("Bare numbers that warn").

use crate::units::Dimension;

/// Keys whose bare value warns above a limit: (keys, dimension, limit in SI units).
/// Sizes of coils and loops over 1 m, cable and winding lengths over 20 m, sheet and
/// layer thicknesses over 10 mm, wire radii over 5 mm, coordinates and swept distances
/// over 100 m, box sizes and map steps over 10 m, dipole areas over 1 m².
const LIMITS: &[(&[&str], Dimension, f64)] = &[
    (
        &[
            "radius",
            "major_radius",
            "minor_radius",
            "inner_radius",
            "outer_radius",
            "width",
            "height",
            "separation",
            "twist_pitch",
        ],
        Dimension::Length,
        1.0,
    ),
    (&["length"], Dimension::Length, 20.0),
    (&["thickness"], Dimension::Length, 0.01),
    (&["wire_radius"], Dimension::Length, 0.005),
    (
        &["position", "vertices", "at", "min", "max", "from", "to"],
        Dimension::Length,
        100.0,
    ),
    (&["size", "step"], Dimension::Length, 10.0),
    (&["effective_area"], Dimension::Area, 1.0),
];

/// The last key name of a key path: `source[2].position[3]` → `position`.
fn last_name(path: &str) -> &str {
    let name = path.rsplit('.').next().unwrap_or(path);
    let name = name.split('[').next().unwrap_or(name);
    // `vertices[4][2]`: the indices go, the name stays.
    name
}

/// For a bare number `value` (SI units) of dimension `dim` at key path `path`, the
/// warning's reason when it is larger than that key allows; `raw` is the number as
/// written.
pub(super) fn bare_warning(path: &str, dim: Dimension, value: f64, raw: &str) -> Option<String> {
    let name = last_name(path);
    let (_, _, limit) = LIMITS
        .iter()
        .find(|(keys, d, _)| *d == dim && keys.contains(&name))?;
    if value.abs() <= *limit {
        return None;
    }
    let (unit, meant) = match dim {
        Dimension::Area => ("m²", "mm2"),
        _ => ("m", "mm"),
    };
    Some(format!(
        "{raw} is read as {raw} {unit} (bare numbers are SI base units); write \"{raw} \
         {meant}\" if that was meant"
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn key_paths_name_their_last_key() {
        assert_eq!(last_name("source[2].position[3]"), "position");
        assert_eq!(last_name("victim[1].vertices[4][2]"), "vertices");
        assert_eq!(last_name("solver.wire_radius"), "wire_radius");
        assert_eq!(last_name("shield[1].layers[2].thickness"), "thickness");
    }

    #[test]
    fn limits_are_per_key_and_per_dimension() {
        assert!(bare_warning("source[1].radius", Dimension::Length, 8.0, "8").is_some());
        assert!(bare_warning("source[1].radius", Dimension::Length, 0.008, "0.008").is_none());
        // A 2 m cable pair is plausible; 25 m is not, for a bare `length`.
        assert!(bare_warning("source[1].length", Dimension::Length, 2.0, "2").is_none());
        assert!(bare_warning("source[1].length", Dimension::Length, 25.0, "25").is_some());
        // A frequency sweep's `from` is not a length.
        assert!(bare_warning("sweep[1].from", Dimension::Frequency, 1e6, "1e6").is_none());
    }
}
