//! The scenario file format: the documented shape loads, saves and reloads
//! unchanged; bad files fail with the field, line and column.

use crate::support::cli::{bin, temp_dir};
use loopwright::files::load::DEMO_RON;
use loopwright::judge::evaluate;
use loopwright::model::scenario::Scenario;
use loopwright::model::Topology;

const DOC_EXAMPLE: &str = r#"(
    title: "Bridge sensor front-end, gain 11",
    stage: (topology: NonInverting, rg: 1000.0, rf: 10000.0, cf: 1.0e-12, riso: 0.0, series: E24, tolerance: 0.01),
    amp: (a0: 100000.0, gbw: 1.0e6, fp2: 10.0e6, rin: 1.0e6, cin: 3.0e-12, ro: 100.0,
          vnoise: 10.0e-9, vnoise_corner: 0.0, inoise: 1.0e-12, inoise_corner: 0.0),
    source: (r: 50.0),
    load: (r: 10000.0, c: 100.0e-12),
    temp_c: 25.0,
    band: (10.0, 100000.0),
)
"#;

fn err(text: &str) -> loopwright::model::ScenarioError {
    Scenario::from_ron(text, Some("t.ron")).expect_err("should fail")
}

#[test]
fn the_documented_shape_loads() {
    let s = Scenario::from_ron(DOC_EXAMPLE, None).unwrap();
    assert_eq!(s.stage.topology, Topology::NonInverting);
    assert_eq!(s.stage.rg, Some(1000.0));
    assert_eq!(s.amp.fp2, Some(10.0e6));
    assert_eq!(s.load.c, Some(100.0e-12));
    assert_eq!(s.band, (10.0, 100000.0));
}

#[test]
fn omitted_optional_fields_are_absent() {
    let text = DOC_EXAMPLE
        .replace("cf: 1.0e-12, riso: 0.0, ", "")
        .replace("fp2: 10.0e6, rin: 1.0e6, cin: 3.0e-12, ", "")
        .replace("vnoise_corner: 0.0, ", "")
        .replace(", inoise_corner: 0.0", "")
        .replace("load: (r: 10000.0, c: 100.0e-12)", "load: ()");
    let s = Scenario::from_ron(&text, None).unwrap();
    assert_eq!(s.stage.cf, None);
    assert_eq!(s.amp.rin, None);
    assert_eq!(s.load.r, None);
    assert!(evaluate(&s).analysis.dc_gain > 10.0);
}

#[test]
fn integers_are_accepted_for_numbers() {
    let text = DOC_EXAMPLE.replace("rg: 1000.0", "rg: 1000");
    let s = Scenario::from_ron(&text, None).unwrap();
    assert_eq!(s.stage.rg, Some(1000.0));
}

#[test]
fn saved_and_reread_is_the_same_scenario() {
    for text in [DOC_EXAMPLE, DEMO_RON] {
        let s = Scenario::from_ron(text, None).unwrap();
        let saved = s.to_ron();
        let back = Scenario::from_ron(&saved, None).unwrap();
        assert_eq!(s, back);
        // The saved form names its version and carries bare numbers.
        assert!(saved.contains("version: 1"), "{saved}");
        assert!(!saved.contains("Some("), "{saved}");
        // Written without the serialiser's extension header (the README's
        // example has none); the loader sets the option itself.
        assert!(!saved.contains("#!["), "{saved}");
        assert!(saved.contains("rf: 10000.0"), "{saved}");
    }
    // A file that carries the header still reads the same.
    let with_header = format!("#![enable(implicit_some)]\n{DOC_EXAMPLE}");
    assert_eq!(
        Scenario::from_ron(&with_header, None).unwrap(),
        Scenario::from_ron(DOC_EXAMPLE, None).unwrap()
    );
}

#[test]
fn follower_without_rg_or_rf() {
    let text = DOC_EXAMPLE.replace(
        "topology: NonInverting, rg: 1000.0, rf: 10000.0,",
        "topology: Follower,",
    );
    let s = Scenario::from_ron(&text, None).unwrap();
    let a = evaluate(&s);
    assert!((a.analysis.ideal_gain - 1.0).abs() < 1e-12);
}

#[test]
fn syntax_error_has_line_and_column() {
    let text = DOC_EXAMPLE.replace("source: (r: 50.0),", "source: (r: 50.0,");
    let e = err(&text);
    assert!(e.line.is_some() && e.col.is_some(), "{e}");
    assert!(e.to_string().starts_with("t.ron:"), "{e}");
}

#[test]
fn unknown_topology_names_the_field() {
    let text = DOC_EXAMPLE.replace("topology: NonInverting", "topology: Sideways");
    let e = err(&text);
    assert_eq!(e.field.as_deref(), Some("stage.topology"), "{e}");
    assert_eq!(e.line, Some(3));
    assert!(e.to_string().contains("Sideways"), "{e}");
}

#[test]
fn negative_and_zero_resistors_are_rejected_with_position() {
    let e = err(&DOC_EXAMPLE.replace("rg: 1000.0", "rg: -1000.0"));
    assert_eq!(e.field.as_deref(), Some("stage.rg"));
    assert_eq!(e.line, Some(3));
    // The column of the field's name on that line, counted here (1-based).
    let line3 = DOC_EXAMPLE.lines().nth(2).unwrap();
    let col = line3.find("rg:").unwrap() + 1;
    assert_eq!(col, 37);
    assert_eq!(e.col, Some(col));
    assert!(e.to_string().contains("-1000"), "{e}");
    let e = err(&DOC_EXAMPLE.replace("rf: 10000.0", "rf: 0.0"));
    assert_eq!(e.field.as_deref(), Some("stage.rf"));
    let e = err(&DOC_EXAMPLE.replace("load: (r: 10000.0", "load: (r: -5.0"));
    assert_eq!(e.field.as_deref(), Some("load.r"));
    assert_eq!(e.line, Some(7));
    let e = err(&DOC_EXAMPLE.replace("source: (r: 50.0)", "source: (r: -50.0)"));
    assert_eq!(e.field.as_deref(), Some("source.r"));
}

#[test]
fn nan_is_rejected() {
    let e = err(&DOC_EXAMPLE.replace("gbw: 1.0e6", "gbw: NaN"));
    assert_eq!(e.field.as_deref(), Some("amp.gbw"), "{e}");
    assert!(e.line.is_some());
    let e = err(&DOC_EXAMPLE.replace("ro: 100.0", "ro: inf"));
    assert_eq!(e.field.as_deref(), Some("amp.ro"), "{e}");
}

#[test]
fn missing_required_field_is_named() {
    let e = err(&DOC_EXAMPLE.replace("gbw: 1.0e6, ", ""));
    assert_eq!(e.field.as_deref(), Some("amp.gbw"), "{e}");
    assert!(e.line.is_some());
    let e = err(&DOC_EXAMPLE.replace("    temp_c: 25.0,\n", ""));
    assert_eq!(e.field.as_deref(), Some("temp_c"), "{e}");
}

#[test]
fn rg_absent_for_a_gain_stage() {
    let e = err(&DOC_EXAMPLE.replace("rg: 1000.0, ", ""));
    assert_eq!(e.field.as_deref(), Some("stage.rg"), "{e}");
    assert!(e.message.contains("needs rg"), "{e}");
    assert!(
        e.line.is_some() && e.col.is_some(),
        "position of the stage: {e}"
    );
    let text = DOC_EXAMPLE
        .replace("NonInverting", "Inverting")
        .replace("rf: 10000.0, ", "");
    let e = err(&text);
    assert_eq!(e.field.as_deref(), Some("stage.rf"), "{e}");
}

#[test]
fn unknown_field_and_wrong_type() {
    let e = err(&DOC_EXAMPLE.replace("ro: 100.0", "rout: 100.0"));
    assert!(e.to_string().contains("rout"), "{e}");
    assert!(e.line.is_some());
    // A string is a value only when it reads as one (`"1k"` does: see
    // saves.rs); a wrong kind of value names its field.
    let e = err(&DOC_EXAMPLE.replace("rg: 1000.0", "rg: true"));
    assert_eq!(e.field.as_deref(), Some("stage.rg"), "{e}");
    let e = err(&DOC_EXAMPLE.replace("rg: 1000.0", "rg: \"1 kilo\""));
    assert_eq!(e.field.as_deref(), Some("stage.rg"), "{e}");
    let e = err(&DOC_EXAMPLE[..200]);
    assert!(e.line.is_some(), "{e}");
}

#[test]
fn newer_format_version_is_a_clear_error() {
    let text = DOC_EXAMPLE.replacen("(\n", "(\n    version: 7,\n", 1);
    let e = err(&text);
    assert_eq!(e.field.as_deref(), Some("version"));
    assert!(e.message.contains("newer"), "{e}");
    let text = DOC_EXAMPLE.replacen("(\n", "(\n    version: 1,\n", 1);
    assert!(Scenario::from_ron(&text, None).is_ok());
}

#[test]
fn every_library_scenario_loads_analyses_and_round_trips() {
    let mut n = 0;
    for entry in std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) != Some("ron") {
            continue;
        }
        n += 1;
        let s = Scenario::load(&path).unwrap_or_else(|e| panic!("{e}"));
        let a = evaluate(&s);
        assert!(
            a.analysis.dc_gain.is_finite() && a.analysis.noise_rms.is_finite(),
            "{}",
            path.display()
        );
        assert!(!a.warnings.iter().any(|w| w.code == "input-invalid"));
        let back = Scenario::from_ron(&s.to_ron(), None).unwrap();
        assert_eq!(s, back, "{}", path.display());
        let text = std::fs::read_to_string(&path).unwrap();
        assert!(
            text.trim_start().starts_with("//"),
            "{} has a comment at the top",
            path.display()
        );
    }
    assert!(n >= 3, "scenarios/ holds at least three stages");
}

#[test]
fn bad_file_in_the_cli_fails_cleanly() {
    let dir = temp_dir("bad");
    let path = dir.join("bad.ron");
    std::fs::write(&path, DOC_EXAMPLE.replace("rg: 1000.0", "rg: -1.0")).unwrap();
    let out = bin().arg("report").arg(&path).output().unwrap();
    assert!(!out.status.success());
    assert!(out.stdout.is_empty());
    let err = String::from_utf8_lossy(&out.stderr);
    // README: ``file:line:column: field `name`: reason``; the column is that
    // of the field's name on line 3, counted here.
    let col = DOC_EXAMPLE.lines().nth(2).unwrap().find("rg:").unwrap() + 1;
    let head = format!("{}:3:{col}: field `stage.rg`: ", path.display());
    let rest = err
        .split_once(&head)
        .unwrap_or_else(|| panic!("{head} in {err}"))
        .1;
    assert!(rest.contains("-1"), "the reason names the value: {err}");
    let out = bin()
        .arg("report")
        .arg(dir.join("missing.ron"))
        .arg("--json")
        .output()
        .unwrap();
    assert!(!out.status.success());
    assert!(out.stdout.is_empty());
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn zero_output_resistance_is_rejected() {
    // ro is a resistor of the model: zero is refused like any zero resistor.
    let e = err(&DOC_EXAMPLE.replace("ro: 100.0", "ro: 0.0"));
    assert_eq!(e.field.as_deref(), Some("amp.ro"), "{e}");
    assert_eq!(e.line, Some(4));
}

#[test]
fn values_outside_the_accepted_ranges_are_refused_with_position() {
    // The README's accepted ranges: each case one past an end.
    for (from, to, field) in [
        ("band: (10.0, 100000.0)", "band: (10.0, 1e307)", "band"),
        ("band: (10.0, 100000.0)", "band: (1e-300, 1e5)", "band"),
        // 1 mHz to 1 THz is 15 decades: allowed; 16 are not.
        ("band: (10.0, 100000.0)", "band: (1e-4, 1e12)", "band"),
        ("rg: 1000.0", "rg: 1e-320", "stage.rg"),
        ("a0: 100000.0", "a0: 1e15", "amp.a0"),
        ("cin: 3.0e-12", "cin: 8e32", "amp.cin"),
        ("temp_c: 25.0", "temp_c: 501.0", "temp_c"),
        ("gbw: 1.0e6", "gbw: 2e11", "amp.gbw"),
    ] {
        let text = DOC_EXAMPLE.replace(from, to);
        assert_ne!(text, DOC_EXAMPLE, "{to}: the example changed");
        let e = err(&text);
        assert_eq!(e.field.as_deref(), Some(field), "{to}: {e}");
        assert!(e.line.is_some() && e.col.is_some(), "{to}: {e}");
    }
    // The ends themselves are accepted (15 decades of band, a0 = 1e9).
    let ok = DOC_EXAMPLE
        .replace("band: (10.0, 100000.0)", "band: (1e-3, 1e12)")
        .replace("a0: 100000.0", "a0: 1e9");
    assert!(Scenario::from_ron(&ok, None).is_ok());
}

/// The issue's example of the signal-limit fields, one to a line so each
/// field's line and column are known.
const LIMITS_EXAMPLE: &str = r#"(
    title: "limits",
    stage: (topology: NonInverting, rg: 1000.0, rf: 10000.0, series: E24, tolerance: 0.01),
    amp: (a0: 100000.0, gbw: 1.0e6, ro: 75.0, vnoise: 10.0e-9, inoise: 1.0e-12,
        vos: 1.0e-3,
        vos_drift: 5.0e-6,
        ib: 80.0e-9,
        ios: 10.0e-9,
        slew: 0.5e6,
        swing_neg: 1.5,
        swing_pos: 1.5,
        cm_neg: 2.0,
        cm_pos: 2.0,
        iout: 20.0e-3),
    source: (r: 100.0,
        dc: 0.5,
        peak: 0.5),
    load: (r: 10000.0),
    supply: (
        neg: -15.0,
        pos: 15.0),
    temp_c: 25.0,
    band: (10.0, 100000.0),
)
"#;

#[test]
fn signal_limit_fields_load_save_and_round_trip() {
    let s = Scenario::from_ron(LIMITS_EXAMPLE, None).unwrap();
    assert_eq!(s.amp.slew, Some(0.5e6));
    assert_eq!(s.source.peak, Some(0.5));
    assert_eq!(s.supply.map(|x| (x.neg, x.pos)), Some((-15.0, 15.0)));
    let back = Scenario::from_ron(&s.to_ron(), None).unwrap();
    assert_eq!(s, back);
    // A file without them writes none of them back.
    let demo = Scenario::from_ron(DOC_EXAMPLE, None).unwrap().to_ron();
    for name in ["vos", "ib", "slew", "supply", "peak", "dc:"] {
        assert!(!demo.contains(name), "{name} in {demo}");
    }
}

#[test]
fn bad_signal_limit_values_name_field_line_and_column() {
    // Each new field with a value outside its README range (negative slew,
    // a negative peak, …), and the rails out of order.
    let cases = [
        ("vos: 1.0e-3", "vos: -1.0e-3", "amp.vos"),
        ("vos_drift: 5.0e-6", "vos_drift: -5.0e-6", "amp.vos_drift"),
        ("ib: 80.0e-9", "ib: 1.0", "amp.ib"),
        ("ios: 10.0e-9", "ios: -1.0e-9", "amp.ios"),
        ("slew: 0.5e6", "slew: -0.5e6", "amp.slew"),
        ("swing_neg: 1.5", "swing_neg: -1.5", "amp.swing_neg"),
        ("swing_pos: 1.5", "swing_pos: 99.0", "amp.swing_pos"),
        ("cm_neg: 2.0", "cm_neg: -99.0", "amp.cm_neg"),
        ("cm_pos: 2.0", "cm_pos: 99.0", "amp.cm_pos"),
        ("iout: 20.0e-3", "iout: -20.0e-3", "amp.iout"),
        ("dc: 0.5", "dc: 1.0e4", "source.dc"),
        ("peak: 0.5", "peak: -0.5", "source.peak"),
        ("neg: -15.0", "neg: 15.0", "supply.neg"),
        ("pos: 15.0", "pos: 1.0e4", "supply.pos"),
        ("swing_neg: 1.5", "swing_neg: 29.0", "amp.swing_neg"),
    ];
    for (good, bad, field) in cases {
        let text = LIMITS_EXAMPLE.replace(good, bad);
        let e = err(&text);
        assert_eq!(e.field.as_deref(), Some(field), "{e}");
        // The line and column of the field's name in the file.
        let key = field.rsplit('.').next().unwrap();
        let (line, col) = text
            .lines()
            .enumerate()
            .find_map(|(i, l)| l.find(&format!(" {key}:")).map(|c| (i + 1, c + 2)))
            .unwrap();
        let shown = e.to_string();
        assert!(
            shown.starts_with(&format!("t.ron:{line}:{col}: field `{field}`: ")),
            "{shown}"
        );
    }
    assert!(err(&LIMITS_EXAMPLE.replace("slew: 0.5e6", "slew: -0.5e6"))
        .message
        .contains("must not be negative"));
    assert!(err(&LIMITS_EXAMPLE.replace("neg: -15.0", "neg: 15.0"))
        .message
        .contains("below the positive rail"));
}

/// A value outside its range is named as written and, when long, in
/// engineering form too (2e13 Ω = 20 TΩ, 1e-6 Ω = 1 µΩ: SI prefixes,
/// SI 2019 brochure), so the reader need not count digits.
#[test]
fn an_out_of_range_value_is_also_given_in_engineering_form() {
    let text = include_str!(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/mic_preamp.ron"
    ));
    let err = |rf: &str| {
        Scenario::from_ron(
            &text.replace("rf: 10000.0", &format!("rf: {rf}")),
            Some("t.ron"),
        )
        .unwrap_err()
        .to_string()
    };
    let big = err("2.0e13");
    assert!(
        big.contains("field `stage.rf`: 20000000000000 (20 TΩ) is outside"),
        "{big}"
    );
    let small = err("1.0e-6");
    assert!(small.contains("0.000001 (1 µΩ) is outside"), "{small}");
    // A short number stays as it is.
    let neg = err("-5.0");
    assert!(neg.contains("-5 must not be negative"), "{neg}");
}
