//! Each design rule fires on a stage built to break it, with its numbers in
//! the sentence. Thresholds are the common-practice ones in DEVELOPERS.md.

mod common;
use common::{follower, plain};
use loopwright::engine::{evaluate, Severity, Topology};

fn find<'a>(
    a: &'a loopwright::engine::Evaluation,
    code: &str,
) -> Option<&'a loopwright::engine::Warning> {
    a.warnings.iter().find(|w| w.code == code)
}

#[test]
fn clean_stage_has_no_warnings() {
    let mut s = plain(Topology::NonInverting, 1e3, 10e3);
    s.amp.vnoise = 10e-9;
    let a = evaluate(&s);
    assert!(a.warnings.is_empty(), "{:?}", a.warnings);
}

#[test]
fn low_phase_margin_warns_and_is_severe_below_30() {
    // Two poles close together give a low margin: PM ≈ 90° − atan(fc/fp2)
    // (textbook), so fp2 ≈ fc gives about 45° and fp2 ≪ fc much less.
    let mut s = follower();
    s.amp.fp2 = Some(0.6e6);
    let a = evaluate(&s);
    let pm = a.phase_margin_deg.unwrap();
    assert!((30.0..45.0).contains(&pm), "{pm}");
    let w = find(&a, "phase-margin").unwrap();
    assert_eq!(w.severity, Severity::Warning);
    assert!(w.text.contains(&format!("{pm:.0}°")), "{}", w.text);
    s.amp.fp2 = Some(0.2e6);
    let a = evaluate(&s);
    assert!(a.phase_margin_deg.unwrap() < 30.0);
    assert_eq!(find(&a, "phase-margin").unwrap().severity, Severity::Severe);
    assert!(find(&a, "peaking").is_some());
}

#[test]
fn gain_error_beyond_tolerance() {
    // Textbook: error ≈ −1/(1 + Aβ); a0 = 1000 at noise gain 11 gives ≈ −1.1 %,
    // beyond a 1 % tolerance.
    let mut s = plain(Topology::NonInverting, 1e3, 10e3);
    s.amp.a0 = 1000.0;
    let a = evaluate(&s);
    let w = find(&a, "gain-error").unwrap();
    assert!(w.text.contains("1.09 %"), "{}", w.text);
    s.stage.tolerance = 0.05;
    assert!(find(&evaluate(&s), "gain-error").is_none());
}

#[test]
fn resistor_noise_dominates() {
    // 100 kΩ resistors (≈ 40 nV/√Hz each, Johnson) swamp a 1 nV/√Hz amplifier.
    let mut s = plain(Topology::Inverting, 100e3, 100e3);
    s.amp.vnoise = 1e-9;
    let a = evaluate(&s);
    let w = find(&a, "resistor-noise").unwrap();
    assert!(w.text.contains('%'));
}

#[test]
fn heavy_output_load() {
    // Common practice: an op-amp output should see a few hundred ohms or more.
    let mut s = plain(Topology::NonInverting, 100.0, 100.0);
    s.load.r = Some(150.0);
    let a = evaluate(&s);
    let w = find(&a, "heavy-output-load").unwrap();
    // 200 Ω ∥ 150 Ω = 85.7 Ω, 11.7 mA per volt.
    assert!(w.text.contains("85.7 Ω"), "{}", w.text);
    assert!(w.text.contains("11.7 mA"), "{}", w.text);
}

#[test]
fn off_series_value() {
    let s = plain(Topology::NonInverting, 1e3, 10.5e3);
    let w = find(&evaluate(&s), "off-series").unwrap().clone();
    assert!(
        w.text.contains("rf") && w.text.contains("E24"),
        "{}",
        w.text
    );
}

#[test]
fn no_crossover() {
    // With a0 = 1 and β = 1/2 the loop gain is 1/2 at DC and never reaches 1.
    let mut s = plain(Topology::NonInverting, 1e3, 1e3);
    s.amp.a0 = 1.0;
    let a = evaluate(&s);
    assert!(a.crossover_hz.is_none() && a.phase_margin_deg.is_none());
    assert!(find(&a, "no-crossover").is_some());
}

#[test]
fn worst_first() {
    let mut s = follower();
    s.amp.fp2 = Some(0.2e6);
    s.amp.a0 = 50.0;
    s.load.r = Some(100.0);
    let a = evaluate(&s);
    let sev: Vec<Severity> = a.warnings.iter().map(|w| w.severity).collect();
    let mut sorted = sev.clone();
    sorted.sort_by(|x, y| y.cmp(x));
    assert_eq!(sev, sorted);
    assert!(sev.len() >= 3);
}
