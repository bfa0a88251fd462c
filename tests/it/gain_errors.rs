//! Two gain errors, named apart: `gain_error` against the stage's own
//! network gain (what finite loop gain costs), `target_error` against the
//! spec's aim. Definitions: (G − G_network)/G_network and (G − aim)/aim,
//! with aim = spec.gain_target, else the network gain (common practice).

use crate::support::cli::{stdout_of, temp_dir};
use serde_json::Value;

/// The ADC driver (gain 2 by its resistors) with a spec aiming at 2.02.
fn aimed() -> String {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/adc_driver_2n2.ron"
    ))
    .unwrap();
    text.replace(
        "spec: (gain_error_max",
        "spec: (gain_target: 2.02, gain_error_max",
    )
}

fn json_of(path: &std::path::Path) -> Value {
    serde_json::from_str(&stdout_of(&["report", path.to_str().unwrap(), "--json"])).unwrap()
}

#[test]
fn report_names_both_errors_by_their_definitions() {
    let d = temp_dir("gain-errors");
    let p = d.join("aimed.ron");
    std::fs::write(&p, aimed()).unwrap();
    let j = json_of(&p);
    let g = j["dc_gain"].as_f64().unwrap();
    let network = j["ideal_gain"].as_f64().unwrap();
    let loop_err = j["gain_error"].as_f64().unwrap();
    let aim_err = j["target_error"].as_f64().unwrap();
    assert!(
        (loop_err - (g - network) / network).abs() < 1e-12,
        "{loop_err}"
    );
    assert!((aim_err - (g - 2.02) / 2.02).abs() < 1e-12, "{aim_err}");
    // About 2/2.02 − 1 = −0.99 %: the aim is 1 % above the resistor ratio's
    // gain of 2; finite loop gain adds its own small part.
    assert!((aim_err - (2.0 / 2.02 - 1.0)).abs() < 5e-4, "{aim_err}");
    let text = stdout_of(&["report", p.to_str().unwrap()]);
    assert!(text.contains("gain error"), "{text}");
    assert!(text.contains("error vs target"), "{text}");
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn without_a_spec_there_is_no_target_error() {
    let p = std::path::Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/mic_preamp.ron"
    ));
    let j = json_of(p);
    assert!(j["target_error"].is_null(), "{}", j["target_error"]);
    let text = stdout_of(&["report", p.to_str().unwrap()]);
    assert!(!text.contains("error vs target"), "{text}");
}

#[test]
fn compare_shows_target_error_and_the_yield_of_each_spec() {
    let d = temp_dir("compare-yield");
    let p = d.join("aimed.ron");
    std::fs::write(&p, aimed()).unwrap();
    let other = concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios/bridge_gain_101.ron");
    let args = ["compare", p.to_str().unwrap(), other];
    let text = stdout_of(&args);
    assert!(text.contains("error vs target"), "{text}");
    assert!(text.contains("\nyield "), "{text}");
    assert!(text.contains("no spec"), "{text}");
    // The yield is the one `spread` gives for the same file and seed.
    let c: Value = serde_json::from_str(&stdout_of(&[&args[..], &["--json"]].concat())).unwrap();
    let s: Value =
        serde_json::from_str(&stdout_of(&["spread", p.to_str().unwrap(), "--json"])).unwrap();
    assert_eq!(
        c["differences"]["yield"]["a"], s["yield"],
        "{}",
        c["differences"]
    );
    assert!(c["differences"]["yield"]["b"].is_null());
    let keys: Vec<&str> = c["differences"]["figures"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["key"].as_str().unwrap())
        .collect();
    assert!(keys.contains(&"target_error"), "{keys:?}");
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn an_unstable_stage_without_an_aim_has_no_target_line() {
    // A follower whose slow poles leave it unstable (see stability.rs), with
    // a spec that gives a margin limit but no aim and no gain-error limit.
    let d = temp_dir("unstable-aim");
    let p = d.join("slow.ron");
    std::fs::write(
        &p,
        r#"(
    title: "slow follower into 1 F",
    stage: (topology: Follower, series: E24, tolerance: 0.01),
    amp: (a0: 1.0e6, gbw: 100.0, fp2: 1.0e-3, ro: 1000.0, vnoise: 1.0e-8, inoise: 1.0e-12),
    source: (r: 0.0),
    load: (c: 1.0),
    temp_c: 25.0,
    band: (0.01, 10.0),
    spec: (pm_min_deg: 45.0),
)"#,
    )
    .unwrap();
    let text = stdout_of(&["report", p.to_str().unwrap()]);
    assert!(text.contains("DC gain            unstable"), "{text}");
    assert!(!text.contains("error vs target"), "{text}");
    std::fs::remove_dir_all(&d).ok();
}
