//! Every shipped demo scene loads, couples and gives finite, positive results.

use std::process::Command;

#[test]
fn every_demo_scene_checks_and_couples() {
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/scenes");
    let mut n = 0;
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) != Some("toml") {
            continue;
        }
        n += 1;
        for cmd in ["check", "couple"] {
            let out = Command::new(env!("CARGO_BIN_EXE_strayflux"))
                .args([cmd, path.to_str().unwrap(), "--json"])
                .output()
                .unwrap();
            assert!(
                out.status.success(),
                "{cmd} {}: {}",
                path.display(),
                String::from_utf8_lossy(&out.stderr)
            );
            let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
            if cmd == "couple" {
                for v in doc["victims"].as_array().unwrap() {
                    let t = v["total_emf_v_rms"].as_f64().unwrap();
                    assert!(t.is_finite() && t > 0.0, "{}: {t}", path.display());
                }
            }
        }
        let text = std::fs::read_to_string(&path).unwrap();
        assert!(
            text.to_lowercase().contains("invented numbers"),
            "{} must say it is a demo with invented numbers",
            path.display()
        );
    }
    assert!(n >= 2, "at least two demo scenes");
}
