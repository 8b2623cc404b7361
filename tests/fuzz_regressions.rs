//! Regression tests, one per finding of the fuzz and property runs (tests/fuzz_scenes.rs,
//! tests/invariants.rs): each input used to panic, stall, allocate gigabytes, print a
//! broken error or accept infinite numbers; each must now give one located error line.

use strayflux::Scene;

const PAIR: &str = "[[source]]\nid = \"p\"\nkind = \"pair\"\nlength = \"0.3 m\"\nseparation = \"3 mm\"\n\
                    twist_pitch = \"PITCH\"\ncurrent = { frequency = \"50 kHz\", peak = \"1 A\" }\n";

fn refused(text: &str, words: &str) {
    let start = std::time::Instant::now();
    let e = Scene::parse("r.toml", text).expect_err("must be refused");
    let shown = e.to_string();
    assert!(
        start.elapsed().as_secs_f64() < 1.0,
        "took {:?}",
        start.elapsed()
    );
    assert_eq!(shown.lines().count(), 1, "{shown}");
    assert!(
        shown.starts_with("r.toml:") && e.line >= 1 && e.col >= 1,
        "{shown}"
    );
    assert!(shown.contains(words), "expected `{words}` in `{shown}`");
}

#[test]
fn fuzz_twist_pitch_of_one_micrometre_allocated_gigabytes() {
    refused(
        &PAIR.replace("PITCH", "1 um"),
        "straight segments, more than strayflux holds",
    );
}

#[test]
fn fuzz_twist_pitch_of_1e_300_overflowed_capacity() {
    refused(&PAIR.replace("\"PITCH\"", "1e-300"), "under 1 nm");
}

#[test]
fn fuzz_pair_of_2_8_million_segments_took_two_seconds() {
    let text = "[[source]]\nid = \"s1\"\nkind = \"pair\"\nlength = \"92.18793146375704 mm\"\n\
                separation = \"0.5 mm\"\ntwist_pitch = \"35 um\"\n\
                current = { waveform = \"sine\", frequency = \"50 Hz\", peak = \"1 A\" }\n";
    refused(text, "straight segments");
}

#[test]
fn fuzz_wire_radius_5e_324_gave_infinite_inductance() {
    let text = "[[source]]\nid = \"s\"\nkind = \"loop\"\nradius = \"8 mm\"\n\
                current = { frequency = \"1 kHz\", peak = \"1 A\" }\n[[victim]]\nid = \"v\"\n\
                kind = \"rectangle\"\nwidth = \"8 mm\"\nheight = \"3 mm\"\nwire_radius = 5e-324\n\
                position = [0, 0, 0.02]\n";
    refused(text, "under 1 nm");
}

#[test]
fn fuzz_victim_1e200_m_wide_gave_infinite_area() {
    let text = "[[source]]\nid = \"s\"\nkind = \"dipole\"\neffective_area = 1\n\
                current = { frequency = \"1 kHz\", peak = \"1 A\" }\n[[victim]]\nid = \"v\"\n\
                kind = \"rectangle\"\nwidth = 1e200\nheight = 0.01\n";
    refused(text, "more than 1000 km");
}

#[test]
fn fuzz_newline_in_a_quoted_key_broke_the_one_line_error() {
    refused("\"new\\nline\" = 0\n", "unknown key");
}

#[test]
fn fuzz_newline_in_a_quantity_broke_the_one_line_error() {
    let text = "[[source]]\nid = \"s\"\nkind = \"loop\"\nradius = \"8\\nkHz\"\n\
                current = { frequency = \"1 kHz\", peak = \"1 A\" }\n";
    refused(text, "radius");
}

#[test]
fn invariants_contact_between_samples_was_not_warned() {
    // A 60 mm rectangle crossing a 40 mm square source 0.47 mm from the old samples
    // (tests/invariants.rs, `contact_between_the_warning_samples_is_warned_about`).
    let text = "[[source]]\nid = \"s\"\nkind = \"rectangle\"\nwidth = 0.04\nheight = 0.04\n\
                current = { frequency = 1e4, peak = 1 }\n[[victim]]\nid = \"frame\"\n\
                kind = \"rectangle\"\nwidth = 0.06\nheight = 0.01\naxis = [1, 0, 0]\n\
                reference = [0, 1, 0]\nposition = [0, -0.01953125, 0.005]\n";
    let scene = Scene::parse("c.toml", text).unwrap();
    assert!(
        scene
            .warnings
            .iter()
            .any(|w| w.contains("touches or crosses")),
        "{:?}",
        scene.warnings
    );
}

#[test]
fn fuzz_sawtooth_of_1e308_amperes_gave_a_nan_phasor() {
    // A mutated crt-deflection-yoke.toml: the sawtooth's line amplitudes 2·peak/(π n)
    // overflow when summed into phasors.
    let text = "[[source]]\nid = \"s\"\nkind = \"loop\"\nradius = \"8 mm\"\n\
                current = { waveform = \"sawtooth\", frequency = \"15 kHz\", \
                peak = \"1e308 A\", harmonics = 9 }\n";
    refused(text, "overflow double precision");
}

#[test]
fn fuzz_saddle_opening_of_5e_324_gave_nan_vertices() {
    let text = "[[source]]\nid = \"s\"\nkind = \"saddle\"\nradius = \"10 mm\"\n\
                length = \"20 mm\"\nopening = 5e-324\nturns = 1\n\
                current = { frequency = \"50 Hz\", peak = \"1 A\" }\n";
    refused(text, "axial runs");
}

#[test]
fn fuzz_integer_beyond_i128_lost_its_sign() {
    let text = "[[source]]\nid = \"s\"\nkind = \"loop\"\nradius = \"8 mm\"\n\
                axis = [0, 0, -100000000000000000000000000000000000000000]\n\
                current = { frequency = \"1 kHz\", peak = \"1 A\" }\n";
    refused(text, "too large for a whole number");
}

#[test]
fn fuzz_shielded_map_with_a_tiny_step_built_every_point_first() {
    // 1e9 points would have been collected (24 GB) before the grid's points were
    // checked against the sheet; the refusal must now be immediate (`refused` times it).
    let text = "[[source]]\nid = \"s\"\nkind = \"loop\"\nradius = \"4 mm\"\n\
                current = { frequency = \"1 kHz\", peak = \"1 A\" }\n\
                [[shield]]\nid = \"al\"\nmaterial = \"aluminium\"\nthickness = \"1 mm\"\n\
                position = [0, 0, 0.011]\naxis = [0, 0, 1]\n\
                [[map]]\nid = \"m\"\nkind = \"box\"\nmin = [-0.02, -0.02, 0.009]\n\
                max = [0.02, 0.02, 0.014]\nstep = \"0.041 mm\"\n";
    refused(text, "inside shield \"al\"");
}

#[test]
fn fuzz_empty_quoted_key_was_shown_as_a_dangling_dot() {
    let text = "[scene]\n\"\" = 3\n";
    refused(text, "scene.\"\"");
}
