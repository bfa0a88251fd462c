//! The headless `report` command: JSON keys, units, nulls and phases.

use crate::support::cli::{bin, temp_dir};
use crate::support::stages::CLOSED_FORM_RON;
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

/// Every top-level key the README's JSON section lists.
const KEYS: [&str; 20] = [
    "title",
    "nominal_gain",
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
    "zout_1khz_ohm",
    "noise_density_1khz",
    "noise_rms",
    "loop_gain_dc",
    "band_hz",
    "noise_sources",
    "points",
    "warnings",
];

/// The keys of one `--at` point (README).
const POINT_KEYS: [&str; 12] = [
    "f_hz",
    "gain_mag",
    "gain_db",
    "gain_phase_deg",
    "zout_mag",
    "zout_phase_deg",
    "zout_pin_mag",
    "zin_mag",
    "zin_phase_deg",
    "loop_mag",
    "loop_phase_deg",
    "noise_density",
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
    assert_eq!(v["nominal_gain"].as_f64(), Some(11.0));
    assert!(v["points"].as_array().unwrap().is_empty());
    // The demo's band is 10 Hz … 100 kHz (assets/demo.ron, as the README shows).
    assert_eq!(v["band_hz"], serde_json::json!([10.0, 100000.0]));
    let sources = v["noise_sources"].as_array().unwrap();
    assert!(!sources.is_empty());
    for n in sources {
        for k in ["key", "label", "rms", "share"] {
            assert!(n.get(k).is_some(), "noise source key {k}");
        }
    }
    for w in v["warnings"].as_array().unwrap() {
        for k in ["code", "severity", "text"] {
            assert!(w.get(k).is_some(), "warning key {k}");
        }
    }
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
        for k in POINT_KEYS {
            assert!(p.get(k).is_some(), "point key {k}");
        }
        let ph = p["gain_phase_deg"].as_f64().unwrap();
        assert!(ph > -180.0 && ph <= 180.0);
        // gain_db is 20·log10 of gain_mag (definition of the decibel).
        let db = 20.0 * p["gain_mag"].as_f64().unwrap().log10();
        assert!((p["gain_db"].as_f64().unwrap() - db).abs() < 1e-9);
    }
    // Loop phase is unwrapped from DC: below −90° at 2.5 MHz for this two-pole model.
    assert!(pts[1]["loop_phase_deg"].as_f64().unwrap() < -90.0);
}

#[test]
fn point_values_match_closed_forms() {
    // A non-inverting stage (rg 1 k, rf 9 k) around a fast single-pole
    // model, ideal source, no load, only voltage noise and resistor noise.
    // Closed forms at 1 kHz, A = a0/(1 + jf/fp1), β = rg/(rg + rf):
    //   gain = (1 + rf/rg)/(1 + 1/(Aβ))                  (finite-gain loop)
    //   1/Zout = 1/(rf + rg) + 1/ro + A·rg/(ro·(rg + rf)) (KCL at the output)
    //   noise² = (en·NG)² + 4kT·rg·(rf/rg)² + 4kT·rf     (textbook, NG = 10)
    let (dir, path) = scenario_file("closed", CLOSED_FORM_RON);
    let v = json(&["report", path.to_str().unwrap(), "--json", "--at", "1k"]);
    let p = &v["points"][0];
    let one = num_complex::Complex64::new(1.0, 0.0);
    let a = 1e8 / num_complex::Complex64::new(1.0, 1e3 / 1e3);
    let gain = 10.0 / (one + 1.0 / (a * 0.1));
    let zout = one / (1.0 / 10e3 + 1.0 / 10.0 + a * 1e3 / (10.0 * 10e3));
    let kt4 = 4.0 * 1.380649e-23 * 298.15;
    let noise = ((3e-9f64 * 10.0).powi(2) + kt4 * 1e3 * 81.0 + kt4 * 9e3).sqrt();
    let close = |key: &str, want: f64, tol: f64| {
        let got = p[key].as_f64().unwrap();
        assert!(((got - want) / want).abs() < tol, "{key}: {got} vs {want}");
    };
    // gbw and a0 at the top of their accepted ranges (fp1 = 1 kHz).
    // Expected errors about 1e-10 (gain), 1e-15 (Zout) and 1.4e-7 (noise:
    // the closed form takes the loop gain as infinite, 1/|Aβ| ≈ 1.4e-7);
    // tolerance 1e-6 for the noise, 1e-9 for gain and Zout.
    close("gain_mag", gain.norm(), 1e-9);
    close("zout_mag", zout.norm(), 1e-9);
    close("zout_phase_deg", zout.arg().to_degrees(), 1e-9);
    close("noise_density", noise, 1e-6);
    // The summary's 1 kHz figures are the same quantities.
    for (key, want) in [
        ("zout_1khz_ohm", zout.norm()),
        ("noise_density_1khz", noise),
    ] {
        let got = v[key].as_f64().unwrap();
        assert!(((got - want) / want).abs() < 1e-6, "{key}: {got} vs {want}");
    }
    // Without rin the + input is open: Zin is null at every frequency.
    assert!(p["zin_mag"].is_null() && p["zin_phase_deg"].is_null());
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn pin_impedance_point_leaves_out_the_isolation_resistor() {
    // The closed-form stage with riso 100 Ω and a 1 kΩ load. At the pin
    // (riso and load removed) KCL gives, with A and β as above,
    //   1/Zout_pin = 1/(rf + rg) + (1 + A·β)/ro,
    // and at the load terminal (load removed) riso is in series:
    //   Zout = riso + Zout_pin (series resistances, no current elsewhere).
    let text = CLOSED_FORM_RON
        .replace("tolerance: 0.01)", "tolerance: 0.01, riso: 100.0)")
        .replace("load: ()", "load: (r: 1000.0)");
    let (dir, path) = scenario_file("pinz", &text);
    let v = json(&["report", path.to_str().unwrap(), "--json", "--at", "1k"]);
    let p = &v["points"][0];
    let one = num_complex::Complex64::new(1.0, 0.0);
    let a = 1e8 / num_complex::Complex64::new(1.0, 1e3 / 1e3);
    let pin = one / (1.0 / 10e3 + (one + a * 0.1) / 10.0);
    let got = p["zout_pin_mag"].as_f64().unwrap();
    // Expected error about 1e-15; tolerance 1e-9.
    assert!(
        ((got - pin.norm()) / pin.norm()).abs() < 1e-9,
        "{got} vs {pin}"
    );
    let zout = p["zout_mag"].as_f64().unwrap();
    let want = (100.0 + pin).norm();
    assert!(((zout - want) / want).abs() < 1e-9, "{zout} vs {want}");
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn output_impedance_phase_is_a_principal_value() {
    // README: gain and Zout phases are principal values in (−180°, 180°].
    // A follower's Zout turns inductive (near +90°) above the open-loop pole
    // and capacitive (towards −90°) with a load capacitance past its
    // resonance; every point stays in range.
    for file in [
        "buffer_rings_10n.ron",
        "line_driver_cable.ron",
        "adc_driver_2n2.ron",
    ] {
        let p = format!("{}/scenarios/{file}", env!("CARGO_MANIFEST_DIR"));
        let mut args = vec!["report".to_string(), p, "--json".into()];
        for f in ["0", "1", "100", "10k", "1M", "10M", "100M", "1G"] {
            args.push("--at".into());
            args.push(f.into());
        }
        let args: Vec<&str> = args.iter().map(|s| s.as_str()).collect();
        let v = json(&args);
        for pt in v["points"].as_array().unwrap() {
            for k in ["zout_phase_deg", "gain_phase_deg"] {
                let ph = pt[k].as_f64().unwrap();
                assert!(ph > -180.0 && ph <= 180.0, "{file} {k} {ph}");
            }
        }
    }
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

#[test]
fn at_refuses_what_is_not_a_frequency() {
    let bin = env!("CARGO_BIN_EXE_loopwright");
    // Not hertz, negative, beyond the widest sweep (1 THz, the accepted
    // frequency range in the README): refused, nothing on stdout.
    for (arg, says) in [
        ("1Ω", "not a frequency"),
        ("1F", "not a frequency"),
        ("-5", "must not be negative"),
        ("1e308", "above 1 THz"),
    ] {
        let out = std::process::Command::new(bin)
            .args(["report", "--at", arg])
            .output()
            .unwrap();
        assert!(!out.status.success(), "{arg}");
        assert!(out.stdout.is_empty(), "{arg}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(says), "{arg}: {err}");
    }
    // 0 is DC and `-0` is DC too: written as 0, never as -0.0.
    let v = json(&["report", "--json", "--at", "-0", "--at", "1kHz"]);
    let f0 = v["points"][0]["f_hz"].as_f64().unwrap();
    assert!(f0 == 0.0 && f0.is_sign_positive());
    assert_eq!(v["points"][1]["f_hz"].as_f64(), Some(1e3));
}

#[test]
fn unstable_stage_has_no_closed_loop_figures() {
    // A follower (β = 1) with three poles in its loop: gbw/a0 = 1 Hz,
    // fp2 = 10 kHz and ro·load c = 1/(2π·100 Ω·1 µF) ≈ 1.6 kHz. Each lags
    // nearly 90° well above its corner, so near |T| = 1 (tens of kHz) the
    // loop lags well past 180°: the phase margin is negative (textbook
    // three-pole loop), the stage unstable.
    let (dir, path) = scenario_file(
        "unstable",
        r#"(
    title: "two poles under the crossover",
    stage: (topology: Follower, series: E24, tolerance: 0.01),
    amp: (a0: 1.0e6, gbw: 1.0e6, fp2: 1.0e4, ro: 100.0, vnoise: 1.0e-9, inoise: 0.0),
    source: (r: 0.0),
    load: (c: 1.0e-6),
    temp_c: 25.0,
    band: (10.0, 100000.0),
)"#,
    );
    let p = path.to_str().unwrap();
    let v = json(&["report", p, "--json"]);
    assert!(v["phase_margin_deg"].as_f64().unwrap() <= 0.0, "{v}");
    for key in [
        "dc_gain",
        "gain_error",
        "f_3db_hz",
        "peaking_db",
        "zout_dc_ohm",
        "zout_1khz_ohm",
        "noise_rms",
    ] {
        assert!(v[key].is_null(), "{key} = {}", v[key]);
    }
    // Loop figures stay.
    assert!(v["crossover_hz"].as_f64().is_some());
    let out = bin().args(["report", p]).output().unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    let line = text.lines().find(|l| l.contains("peaking")).unwrap();
    assert!(line.contains("unstable"), "{text}");
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn ratios_plain_tolerances_in_percent_capacitors_in_pf() {
    // A follower at a 1 MHz gbw, read at 10 MHz: single pole, |T| ≈
    // gbw/f = 0.1, a plain ratio (no "100 m"); tolerance 0.005 = 0.5 %;
    // cf 820 fF reads 0.82 pF (board practice); no "-0.0" anywhere.
    let (_dir, path) = scenario_file(
        "plain-ratios",
        "(title: \"plain\", stage: (topology: NonInverting, rg: 1000.0, rf: 1000.0, \
         cf: 0.82e-12, series: E24, tolerance: 0.005), amp: (a0: 100000.0, gbw: 1.0e6, \
         ro: 1.0, vnoise: 0.0, inoise: 0.0), source: (r: 0.0), load: (), temp_c: 25.0, \
         band: (10.0, 100000.0))",
    );
    let out = bin()
        .args(["report", path.to_str().unwrap(), "--at", "10M", "--at", "1"])
        .output()
        .unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("tolerance ±0.5%"), "{text}");
    assert!(!text.contains(" m%"), "{text}");
    assert!(text.contains("cf 0.82pF"), "{text}");
    assert!(!text.contains("fF"), "{text}");
    for negative_zero in ["-0.0°", "-0.0 dB", " -0 "] {
        assert!(!text.contains(negative_zero), "{negative_zero} in {text}");
    }
    let row = text
        .lines()
        .find(|l| l.trim_start().starts_with("10 MHz"))
        .unwrap();
    // The loop magnitude gbw/(NG·f) = 1 MHz/(2·10 MHz) = 0.05 (single pole).
    assert!(row.contains(" 0.05"), "{row}");
    assert!(!row.contains(" m "), "{row}");
}
