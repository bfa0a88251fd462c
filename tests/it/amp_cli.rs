//! `loopwright amp FROM.ron`: the printed block is a usable `amp` whose
//! values meet the closed forms, and bad figure files are refused at
//! file:line:column.

use crate::support::cli::{bin, stdout_of, temp_dir};
use loopwright::model::Scenario;

/// The demo stage with its `amp` block replaced by `block`.
fn stage_with(block: &str) -> Scenario {
    let demo = include_str!(concat!(env!("CARGO_MANIFEST_DIR"), "/assets/demo.ron"));
    let start = demo.find("    amp: (").unwrap();
    let end = start + demo[start..].find("),\n").unwrap() + 3;
    let body: String = block
        .lines()
        .filter(|l| !l.starts_with("//"))
        .collect::<Vec<_>>()
        .join("\n");
    let text = format!("{}{}\n{}", &demo[..start], body, &demo[end..]);
    Scenario::from_ron(&text, None).unwrap_or_else(|e| panic!("{e}\n{text}"))
}

fn write(dir: &std::path::Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.display().to_string()
}

#[test]
fn amp_from_unity_crossing_and_margin_gives_the_closed_form_poles() {
    let d = temp_dir("amp-unity");
    let f = write(
        &d,
        "f.ron",
        r#"(
    gain_db: 100,
    unity: "1M",
    phase_margin: 68,
    ro: 50,
    cin_cm: "3p", cin_diff: "2p",
    vnoise: (spots: [(10, "33.166n"), ("1k", "10.488n")]),
    inoise: (white: "1p"),
)"#,
    );
    let out = stdout_of(&["amp", &f]);
    assert!(out.contains("Given: the unity-gain frequency f_u"), "{out}");
    let s = stage_with(&out);
    // Issue 28: fp2 = 1 MHz/tan 22° = 2.475 MHz, gbw = 1.0785 MHz.
    assert!((s.amp.fp2.unwrap() / 2.475e6 - 1.0).abs() < 1e-3, "{out}");
    assert!((s.amp.gbw / 1.0785e6 - 1.0).abs() < 1e-4, "{out}");
    // Textbook: 100 dB = 1e5.
    assert!((s.amp.a0 / 1e5 - 1.0).abs() < 1e-6);
    // Common practice: cin per pin = C_cm + C_diff = 5 pF.
    assert!((s.amp.cin.unwrap() / 5e-12 - 1.0).abs() < 1e-6);
    // Spots made from e_n = 10 nV, f_c = 100 Hz: 10n·√11 = 33.166n, 10n·√1.1 = 10.488n.
    assert!((s.amp.vnoise / 10e-9 - 1.0).abs() < 1e-3, "{out}");
    assert!(
        (s.amp.vnoise_corner.unwrap() / 100.0 - 1.0).abs() < 1e-2,
        "{out}"
    );
    // Each derived value carries its formula.
    let fp2_line = out
        .lines()
        .find(|l| l.trim_start().starts_with("fp2:"))
        .unwrap();
    assert!(
        fp2_line.contains("tan(90° − PM)") && fp2_line.contains("68°"),
        "{fp2_line}"
    );
}

#[test]
fn amp_ro_from_closed_loop_output_impedance_with_gbw_given() {
    let d = temp_dir("amp-ro");
    // |A| = 70 dB at 800 Hz with a0 = 1e5, single pole: gbw = a0·f/√((a0/|A|)² − 1).
    let a_mag = 10f64.powf(3.5);
    let gbw = 1e5 * 800.0 / ((1e5 / a_mag).powi(2) - 1.0).sqrt();
    let f = write(
        &d,
        "f.ron",
        &format!(
            "(a0: 1e5, gbw: {gbw:e}, zout: (ohms: 0.5, at: 800, gain: 10, circuit: NonInverting),\n \
             vnoise: (white: \"10n\"), inoise: (white: \"1p\"),\n \
             swing: (neg: 1.2, pos: 1.1, load: \"2k\"), vos: (typ: \"1m\", max: \"4m\"), take: Maximum)"
        ),
    );
    let out = stdout_of(&["amp", &f]);
    assert!(out.contains("Given: the gain-bandwidth gbw"), "{out}");
    let s = stage_with(&out);
    // Issue 28: ro = 158.1 Ω with the complex A (158.6 Ω if A were real).
    assert!((s.amp.ro - 158.1).abs() < 0.05, "{out}");
    // `take: Maximum` copies the maximum figure.
    assert_eq!(s.amp.vos, Some(4e-3));
    // The swing's load is said beside the swing values.
    let line = out
        .lines()
        .find(|l| l.trim_start().starts_with("swing_neg:"))
        .unwrap();
    assert!(line.contains("2 kΩ load"), "{line}");
}

#[test]
fn amp_refuses_bad_figures_at_file_line_column() {
    let d = temp_dir("amp-bad");
    let cases = [
        // A margin the single pole already exceeds.
        ("(gain_db: 100, unity: \"1M\",\n phase_margin: 95, ro: 50,\n vnoise: (white: \"10n\"), inoise: (white: \"1p\"))", ":2:2:", "single pole"),
        // A number that is no number.
        ("(gain_db: 100,\n   gbw: \"1Q\", ro: 50, vnoise: (white: \"10n\"), inoise: (white: \"1p\"))", ":2:", "gbw"),
        // A field the format does not have.
        ("(gain_db: 100, gbw: 1e6, ro: 50,\n vnoise: (white: \"10n\"), inoise: (white: \"1p\"), colour: 3)", ":2:", "colour"),
        // A missing figure.
        ("(gain_db: 100, gbw: 1e6, vnoise: (white: \"10n\"), inoise: (white: \"1p\"))", ":1:1:", "ro"),
        // A derived value out of the accepted range, placed at its figure
        // (a0 = 10^(200/20) = 1e10, above the 1e9 limit).
        ("(gbw: 1e6, ro: 50,\n gain_db: 200, vnoise: (white: \"10n\"), inoise: (white: \"1p\"))", ":2:2:", "amp.a0"),
        // Noise rising with frequency.
        ("(gain_db: 100, gbw: 1e6, ro: 50,\n\n  vnoise: (spots: [(10, \"5n\"), (1000, \"8n\")]), inoise: (white: \"1p\"))", ":3:3:", "only falls"),
    ];
    for (i, (text, place, word)) in cases.iter().enumerate() {
        let f = write(&d, &format!("bad{i}.ron"), text);
        let out = bin().args(["amp", &f]).output().unwrap();
        assert!(!out.status.success(), "{text}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(&format!("{f}{place}")), "{text}: {err}");
        assert!(err.contains(word), "{text}: {err}");
        assert!(!err.contains("panicked"), "{err}");
    }
}

/// The rejection figures: CMRR and PSRR in dB as printed (a guaranteed
/// minimum and a typical figure), and the frequency where each starts to
/// fall. `take: Typical` copies the typical figure; `take: Maximum` (the
/// worst case) the minimum, a rejection's worst case being its lowest
/// (common practice: datasheets print rejection as min/typ); a figure
/// given alone is copied whichever is asked. The block is a usable amp.
#[test]
fn amp_copies_the_rejection_figures_typical_or_worst_case() {
    let d = temp_dir("amp-rejection");
    let figures = |take: &str, psrr: &str| {
        format!(
            r#"(
    take: {take},
    gain_db: 100,
    unity: "1M",
    ro: 50,
    vnoise: (white: "10n"),
    inoise: (white: "1p"),
    cmrr: (min: 80, typ: 95, corner: "2k"),
    psrr: {psrr},
)"#
        )
    };
    let typical = write(&d, "typ.ron", &figures("Typical", "(min: 86)"));
    let s = stage_with(&stdout_of(&["amp", &typical]));
    assert_eq!(s.amp.cmrr_db, Some(95.0));
    assert_eq!(s.amp.cmrr_corner, Some(2000.0));
    assert_eq!(s.amp.psrr_db, Some(86.0), "only the minimum was given");
    assert_eq!(s.amp.psrr_corner, None, "no corner given: none copied");
    let worst = write(&d, "max.ron", &figures("Maximum", "(typ: 110, corner: 50)"));
    let s = stage_with(&stdout_of(&["amp", &worst]));
    assert_eq!(s.amp.cmrr_db, Some(80.0), "the worst case is the minimum");
    assert_eq!(s.amp.psrr_db, Some(110.0), "only the typical was given");
    assert_eq!(s.amp.psrr_corner, Some(50.0));
    // A rejection with neither figure is refused at its field.
    let bad = write(&d, "bad.ron", &figures("Typical", "(corner: 50)"));
    let out = bin().args(["amp", &bad]).output().unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("bad.ron:9:") && err.contains("psrr"), "{err}");
}
