//! `loopwright sweep`: the header, every row read by a CSV reader, values
//! equal to `report --at`, the JSON columns, and refused input.

use crate::support::cli::{bin, stdout_of, temp_dir};
use crate::support::stages::{follower, in_range, CLOSED_FORM_RON};
use serde_json::Value;

/// The header the README and the issue give, exactly.
const HEADER: &str = "f_hz,gain_mag,gain_db,gain_phase_deg,loop_mag,loop_db,loop_phase_deg,zout_mag,zout_phase_deg,zin_mag,zin_phase_deg,noise_density,cmrr_db";

fn run(args: &[&str]) -> std::process::Output {
    bin().args(args).output().unwrap()
}

fn scenario(name: &str) -> String {
    format!("{}/scenarios/{name}", env!("CARGO_MANIFEST_DIR"))
}

/// Every row of the CSV text, each cell None when empty.
fn read_csv(text: &str) -> (Vec<String>, Vec<Vec<Option<f64>>>) {
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let header: Vec<String> = r.headers().unwrap().iter().map(String::from).collect();
    let rows = r
        .records()
        .map(|rec| {
            rec.unwrap()
                .iter()
                .map(|c| (!c.is_empty()).then(|| c.parse::<f64>().unwrap()))
                .collect()
        })
        .collect();
    (header, rows)
}

fn rel(a: f64, b: f64) -> f64 {
    if a == b {
        0.0
    } else {
        ((a - b) / b).abs()
    }
}

#[test]
fn header_and_rows_of_every_scenario() {
    for entry in std::fs::read_dir(scenario("")).unwrap() {
        let path = entry.unwrap().path();
        let text = stdout_of(&["sweep", path.to_str().unwrap()]);
        assert_eq!(text.lines().next(), Some(HEADER), "{path:?}");
        let (header, rows) = read_csv(&text);
        assert_eq!(header.join(","), HEADER);
        // The analysis sweep: 30 points a decade over at least 0.01 Hz … 1 GHz
        // (11 decades, DEVELOPERS.md), so more than 330 rows.
        assert!(rows.len() > 330, "{path:?}: {} rows", rows.len());
        for r in &rows {
            assert_eq!(r.len(), 13);
            // loop_db is 20·log10(loop_mag) (definition of the decibel).
            if let (Some(m), Some(db)) = (r[4], r[5]) {
                assert!((db - 20.0 * m.log10()).abs() < 1e-9, "{path:?}");
            }
        }
        let f: Vec<f64> = rows.iter().map(|r| r[0].unwrap()).collect();
        assert!(f.windows(2).all(|w| w[0] <= w[1]), "{path:?} ascending");
    }
}

#[test]
fn rows_equal_report_at_the_same_frequency() {
    let file = scenario("line_driver_cable.ron");
    let (_, rows) = read_csv(&stdout_of(&["sweep", &file]));
    // Several rows across the sweep, the CSV text of f_hz passed back.
    for i in [0, 7, rows.len() / 3, rows.len() / 2, rows.len() - 1] {
        let f = rows[i][0].unwrap();
        let v: Value = serde_json::from_str(&stdout_of(&[
            "report",
            &file,
            "--json",
            "--at",
            &format!("{f}"),
        ]))
        .unwrap();
        let p = &v["points"][0];
        assert_eq!(
            p["f_hz"].as_f64(),
            Some(f),
            "the frequency reads back exactly"
        );
        let pairs = [
            (1, "gain_mag"),
            (2, "gain_db"),
            (3, "gain_phase_deg"),
            (4, "loop_mag"),
            (6, "loop_phase_deg"),
            (7, "zout_mag"),
            (8, "zout_phase_deg"),
            (9, "zin_mag"),
            (10, "zin_phase_deg"),
            (11, "noise_density"),
        ];
        for (col, key) in pairs {
            match (rows[i][col], p[key].as_f64()) {
                (Some(a), Some(b)) => assert!(rel(a, b) < 1e-9, "row {i} {key}: {a} vs {b}"),
                (None, None) => {}
                other => panic!("row {i} {key}: {other:?}"),
            }
        }
    }
}

#[test]
fn a_grid_against_closed_forms_and_json_columns() {
    // A non-inverting stage (rg 1 k, rf 9 k) around a single-pole model
    // with a0 = 1e8, gbw = 1e11 (open-loop pole at 1 kHz), no rin: the
    // textbook finite-gain loop gain = (1 + rf/rg)/(1 + 1/(Aβ)), β = 0.1,
    // loop gain T = Aβ·(rg + rf)/(ro + rg + rf) (ro loaded by the
    // feedback network, no load), and Zin open.
    let dir = temp_dir("sweep-closed");
    let path = dir.join("closed.ron");
    std::fs::write(&path, CLOSED_FORM_RON).unwrap();
    let p = path.to_str().unwrap();
    let text = stdout_of(&["sweep", p, "--from", "1k", "--to", "100k", "--ppd", "1"]);
    let (_, rows) = read_csv(&text);
    let f: Vec<f64> = rows.iter().map(|r| r[0].unwrap()).collect();
    assert_eq!(f, vec![1e3, 1e4, 1e5]);
    let one = num_complex::Complex64::new(1.0, 0.0);
    for r in &rows {
        let f = r[0].unwrap();
        let a = 1e8 / num_complex::Complex64::new(1.0, f / 1e3);
        let gain = 10.0 / (one + 1.0 / (a * 0.1));
        assert!(rel(r[1].unwrap(), gain.norm()) < 1e-9, "gain at {f}");
        assert!(
            rel(r[4].unwrap(), (a * 0.1 * 10e3 / 10010.0).norm()) < 1e-9,
            "loop at {f}"
        );
        assert_eq!((r[9], r[10]), (None, None), "Zin open: empty cells");
    }
    assert!(text.lines().nth(1).unwrap().contains(",,"), "empty cells");
    let json = stdout_of(&[
        "sweep", p, "--from", "1k", "--to", "100k", "--ppd", "1", "--json",
    ]);
    // The keys appear in column order in the text.
    let at: Vec<usize> = HEADER
        .split(',')
        .map(|k| json.find(&format!("\"{k}\":")).unwrap())
        .collect();
    assert!(at.windows(2).all(|w| w[0] < w[1]), "column order");
    let v: Value = serde_json::from_str(&json).unwrap();
    let obj = v.as_object().unwrap();
    assert_eq!(obj.len(), 13);
    for (col, name) in HEADER.split(',').enumerate() {
        let arr = obj[name].as_array().unwrap();
        assert_eq!(arr.len(), 3, "{name}");
        for (i, x) in arr.iter().enumerate() {
            // serde_json's default reader may round the last bit.
            match (x.as_f64(), rows[i][col]) {
                (Some(a), Some(b)) => assert!(rel(a, b) < 1e-15, "{name}[{i}]: JSON = CSV"),
                (a, b) => assert_eq!(a, b, "{name}[{i}]: null = empty"),
            }
        }
    }
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn bad_input_is_refused_with_a_message() {
    let file = scenario("mic_preamp.ron");
    for (args, says) in [
        (vec!["sweep", "/nonexistent/stage.ron"], "stage.ron"),
        (vec!["sweep", &file, "--from", "0"], "above 0 Hz"),
        (
            vec!["sweep", &file, "--from", "1M", "--to", "1k"],
            "must be above",
        ),
        (vec!["sweep", &file, "--ppd", "0"], "at least 1"),
        (
            vec!["sweep", &file, "--ppd", "1000", "--from", "1m"],
            "at most 2000",
        ),
        (
            vec!["sweep", &file, "--csv", "--json"],
            "cannot be used with",
        ),
    ] {
        let out = run(&args);
        assert!(!out.status.success(), "{args:?}");
        assert!(out.stdout.is_empty(), "{args:?}: nothing on stdout");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(says), "{args:?}: {err}");
    }
}

/// `sweep --step`: the header `t_s,v`, every row read back, the same
/// samples as `report --json --waveform`, and a one-pole follower's
/// step y = G·ΔV·(1 − e^{−t/τ}), τ = a0/(2π·gbw·(1 + a0)) (the first-order
/// step response of any control text), G = a0/(1 + a0).
#[test]
fn step_waveform_as_csv_and_json() {
    let dir = temp_dir("sweep-step");
    let mut s = in_range(follower());
    s.step = Some(loopwright::model::scenario::Step::of(1.0));
    let file = dir.join("follower.ron");
    std::fs::write(&file, s.to_ron()).unwrap();
    let f = file.to_str().unwrap();
    let text = stdout_of(&["sweep", f, "--step", "--points", "200"]);
    assert_eq!(text.lines().next(), Some("t_s,v"));
    let (header, rows) = read_csv(&text);
    assert_eq!(header, ["t_s", "v"]);
    assert_eq!(rows.len(), 200);
    let (a0, gbw) = (s.amp.a0, s.amp.gbw);
    let tau = a0 / (2.0 * std::f64::consts::PI * gbw * (1.0 + a0));
    let g = a0 / (1.0 + a0);
    for r in &rows[1..] {
        let (t, v) = (r[0].unwrap(), r[1].unwrap());
        let want = g * (1.0 - (-t / tau).exp());
        assert!((v - want).abs() < 1e-6, "t {t}: {v} vs {want}");
    }
    // The same samples as the report's waveform (serde_json's default
    // float parser may be one unit in the last place off).
    let json: Value =
        serde_json::from_str(&stdout_of(&["report", f, "--json", "--waveform", "200"])).unwrap();
    let w = &json["step"];
    for (i, r) in rows.iter().enumerate() {
        for (col, k) in [(0, "t_s"), (1, "v")] {
            let (a, b) = (w[k][i].as_f64().unwrap(), r[col].unwrap());
            assert!(
                rel(a, b) < 1e-15 || (a - b).abs() < 1e-300,
                "{k} row {i}: {a} vs {b}"
            );
        }
    }
    // JSON columns of the same names.
    let cols: Value = serde_json::from_str(&stdout_of(&[
        "sweep", f, "--step", "--points", "200", "--json",
    ]))
    .unwrap();
    assert_eq!(cols.as_object().unwrap().len(), 2);
    assert_eq!(cols["v"].as_array().unwrap().len(), 200);
    // --step takes no frequency range.
    assert!(!run(&["sweep", f, "--step", "--from", "1k"])
        .status
        .success());
    std::fs::remove_dir_all(&dir).ok();
}
