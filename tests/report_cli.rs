//! The headless `report` command: JSON keys, units, nulls and phases.

mod common;
use common::{bin, temp_dir};
use serde_json::Value;

fn json(args: &[&str]) -> Value {
    let out = bin().args(args).output().unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

/// Write a scenario into a fresh folder: (folder, file).
fn scenario_file(name: &str, text: &str) -> (std::path::PathBuf, std::path::PathBuf) {
    let dir = temp_dir(name);
    let path = dir.join(format!("{name}.ron"));
    std::fs::write(&path, text).unwrap();
    (dir, path)
}

const KEYS: [&str; 16] = [
    "title",
    "ideal_gain",
    "dc_gain",
    "gain_error",
    "f_3db_hz",
    "peaking_db",
    "crossover_hz",
    "phase_margin_deg",
    "gain_margin_db",
    "zout_dc_ohm",
    "zin_dc_ohm",
    "noise_density_1khz",
    "noise_rms",
    "points",
    "warnings",
    "noise_sources",
];

#[test]
fn demo_json_has_every_key() {
    let v = json(&["report", "--json"]);
    for k in KEYS {
        assert!(v.get(k).is_some(), "missing key {k}");
    }
    assert_eq!(v["title"], "Bridge sensor front-end, gain 11");
    // Demo: gain 1 + 10k/1k = 11 (textbook non-inverting gain).
    assert!((v["ideal_gain"].as_f64().unwrap() - 11.0).abs() < 1e-9);
    assert!(v["points"].as_array().unwrap().is_empty());
}

#[test]
fn points_at_frequencies_in_engineering_notation() {
    let v = json(&[
        "report", "--json", "--at", "1k", "--at", "2.5MHz", "--at", "100",
    ]);
    let pts = v["points"].as_array().unwrap();
    assert_eq!(pts.len(), 3);
    let f: Vec<f64> = pts.iter().map(|p| p["f_hz"].as_f64().unwrap()).collect();
    assert_eq!(f, vec![1000.0, 2.5e6, 100.0]);
    for p in pts {
        for k in [
            "f_hz",
            "gain_mag",
            "gain_phase_deg",
            "zout_mag",
            "zout_phase_deg",
            "zin_mag",
            "loop_mag",
            "loop_phase_deg",
            "noise_density",
        ] {
            assert!(p.get(k).is_some(), "point key {k}");
        }
        let ph = p["gain_phase_deg"].as_f64().unwrap();
        assert!(ph > -180.0 && ph <= 180.0);
    }
    // The same figures at 1 kHz as the summary's.
    assert_eq!(pts[0]["noise_density"], v["noise_density_1khz"]);
    assert_eq!(pts[0]["zout_mag"], v["zout_1khz_ohm"]);
    // Loop phase is unwrapped from DC: below −90° at 2.5 MHz for this two-pole model.
    assert!(pts[1]["loop_phase_deg"].as_f64().unwrap() < -90.0);
}

#[test]
fn inverting_gain_phase_is_180_and_loop_phase_unwraps() {
    let (dir, path) = scenario_file(
        "inv",
        r#"(
    title: "inverting",
    stage: (topology: Inverting, rg: 1000.0, rf: 10000.0, series: E24, tolerance: 0.01),
    amp: (a0: 100000.0, gbw: 1.0e6, fp2: 3.0e6, ro: 50.0, vnoise: 10.0e-9, inoise: 1.0e-12),
    source: (r: 0.0),
    load: (c: 1.0e-9),
    temp_c: 25.0,
    band: (10.0, 100000.0),
)"#,
    );
    let p = path.to_str().unwrap();
    let v = json(&["report", p, "--json", "--at", "0.01", "--at", "100M"]);
    assert!(v["dc_gain"].as_f64().unwrap() < 0.0);
    let pts = v["points"].as_array().unwrap();
    // Principal value: an inverting stage at low frequency is at +180°, not −180°.
    let ph = pts[0]["gain_phase_deg"].as_f64().unwrap();
    assert!((ph - 180.0).abs() < 0.1, "{ph}");
    // Far above crossover three poles are in the loop: unwrapped below −180°.
    assert!(pts[1]["loop_phase_deg"].as_f64().unwrap() < -180.0);
    // rin omitted in an inverting stage: Zin is still finite (≈ rg).
    assert!((v["zin_dc_ohm"].as_f64().unwrap() - 1000.0).abs() < 1.0);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn open_input_is_null() {
    let (dir, path) = scenario_file(
        "open",
        r#"(
    title: "no rin",
    stage: (topology: NonInverting, rg: 1000.0, rf: 1000.0, series: E24, tolerance: 0.01),
    amp: (a0: 100000.0, gbw: 1.0e6, ro: 50.0, vnoise: 10.0e-9, inoise: 1.0e-12),
    source: (r: 50.0),
    load: (r: 2000.0),
    temp_c: 25.0,
    band: (10.0, 100000.0),
)"#,
    );
    let v = json(&["report", path.to_str().unwrap(), "--json", "--at", "0"]);
    assert!(v["zin_dc_ohm"].is_null());
    assert!(v["points"][0]["zin_mag"].is_null());
    // One pole only: the phase never reaches −180°, so no gain margin.
    assert!(v["gain_margin_db"].is_null());
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn every_library_file_reports() {
    for entry in std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios")).unwrap() {
        let path = entry.unwrap().path();
        let p = path.to_str().unwrap();
        let v = json(&["report", p, "--json"]);
        assert!(v["dc_gain"].is_number(), "{p}");
        let out = bin().args(["report", p]).output().unwrap();
        let text = String::from_utf8(out.stdout).unwrap();
        assert!(text.contains("phase margin"), "{p}");
    }
}

#[test]
fn ringing_buffer_warns_in_the_report() {
    let p = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/buffer_rings_10n.ron"
    );
    let v = json(&["report", p, "--json"]);
    let w = v["warnings"].as_array().unwrap();
    let pm = w
        .iter()
        .find(|w| w["code"] == "phase-margin")
        .expect("phase-margin warning");
    assert_eq!(pm["severity"], "severe");
    assert!(pm["text"].as_str().unwrap().contains("10 nF"));
    // Worst first.
    assert_eq!(w[0]["severity"], "severe");
}

#[test]
fn bad_at_value_is_an_error() {
    let out = bin()
        .args(["report", "--json", "--at", "4k7k"])
        .output()
        .unwrap();
    assert!(!out.status.success());
    assert!(out.stdout.is_empty());
    assert!(String::from_utf8_lossy(&out.stderr).contains("4k7k"));
}

#[test]
fn text_report_has_units() {
    let out = bin().args(["report"]).output().unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("kHz"), "{text}");
    assert!(text.contains("mΩ"), "{text}");
    assert!(text.contains("V/√Hz"), "{text}");
}
