//! The amplifier's own common-mode and supply rejection (issue 22 part 2):
//! an error in series with the + input, κ(s)·V_cm + ψ(s)·ΔV_supply with
//! κ, ψ = 10^(−dB/20)·(1 + s/ω_corner). Checked against closed forms
//! recomputed here (common practice: the error is amplified by the noise
//! gain; first-order loop algebra), in the frequency and the time domain,
//! and the file fields against their README ranges.

use crate::support::closed_forms::assert_rel;
use crate::support::stages::{self, fast, in_range};
use loopwright::engine::analysis::{analyze, Circuit};
use loopwright::judge::evaluate;
use loopwright::model::scenario::{Scenario, Spec, Supply};
use loopwright::model::Topology;
use num_complex::Complex64 as C64;
use std::f64::consts::PI;

/// 10^(−dB/20): a rejection figure as the error per volt.
fn per_volt(db: f64) -> f64 {
    10f64.powf(-db / 20.0)
}

/// The three kinds with their noise gain 1 + rf/rg (1 for a follower):
/// the gain an error in series with the + input sees (common practice).
fn kinds() -> Vec<(Scenario, f64)> {
    let (rg, rf) = (1.0e3, 9.0e3);
    vec![
        (
            in_range(stages::plain(Topology::NonInverting, rg, rf)),
            10.0,
        ),
        (in_range(stages::plain(Topology::Inverting, rg, rf)), 10.0),
        (in_range(stages::follower()), 1.0),
    ]
}

fn with_ripple(mut s: Scenario, ripple: f64, hz: Option<f64>) -> Scenario {
    s.supply = Some(Supply {
        neg: -15.0,
        pos: 15.0,
        ripple: Some(ripple),
        ripple_hz: hz,
    });
    s
}

#[test]
fn flat_supply_rejection_reaches_the_output_times_the_noise_gain() {
    // Common practice: with a flat rejection p, the supply ripple appears
    // at the output as ripple·G/p, G the noise gain, to within 1/|T|.
    let (ripple, f, p_db) = (0.05, 1.0e3, 80.0);
    for (s, g) in kinds() {
        let mut s = with_ripple(s, ripple, Some(f));
        s.amp.psrr_db = Some(p_db);
        let e = evaluate(&s);
        // The single-pole loop gain at f: A(jf)/G, A = a0/(1 + jf/fp1),
        // fp1 = gbw/a0 (the model's definition, README).
        let fp1 = s.amp.gbw / s.amp.a0;
        let t = (s.amp.a0 / C64::new(1.0, f / fp1)).norm() / g;
        let want = ripple * g * per_volt(p_db);
        let got = e.analysis.ripple_out_v.expect("ripple given");
        assert_rel(
            &format!("{:?} ripple", s.stage.topology),
            got,
            want,
            1.0 / t,
        );
        let rej = e.analysis.supply_rejection_db.expect("psrr given");
        let want_db = p_db - 20.0 * g.log10();
        assert!(
            (rej - want_db).abs() <= 20.0 * (1.0 + 1.0 / t).log10(),
            "{:?}: {rej} dB against {want_db} dB",
            s.stage.topology
        );
    }
}

#[test]
fn rejection_falls_twenty_db_a_decade_above_its_corner() {
    // Closed form: |ψ(jf)| = p·√(1 + (f/fc)²), so the rejection at the
    // output of a follower (noise gain 1, a near-ideal amplifier) is
    // p_dB − 10·log10(1 + (f/fc)²): 20 dB less per decade well above fc.
    let (p_db, fc) = (100.0, 1.0e3);
    let at = |f: f64| {
        let mut s = with_ripple(fast(stages::follower()), 1.0, Some(f));
        s.amp.psrr_db = Some(p_db);
        s.amp.psrr_corner = Some(fc);
        analyze(&s).supply_rejection_db.expect("psrr given")
    };
    for f in [100.0, 1.0e3, 1.0e4, 1.0e5, 1.0e6] {
        let want = p_db - 10.0 * (1.0 + (f / fc).powi(2)).log10();
        assert!(
            (at(f) - want).abs() < 1e-3,
            "{f} Hz: {} against {want}",
            at(f)
        );
    }
    let slope = at(1.0e5) - at(1.0e6);
    let want = 10.0 * ((1.0 + 1.0e6) / (1.0 + 1.0e4_f64)).log10();
    assert!(
        (slope - want).abs() < 1e-3 && (slope - 20.0).abs() < 0.01,
        "{slope}"
    );
    // Without ripple_hz the rejection is read at DC: p_dB itself.
    let mut s = with_ripple(fast(stages::follower()), 1.0, None);
    s.amp.psrr_db = Some(p_db);
    s.amp.psrr_corner = Some(fc);
    let dc = analyze(&s).supply_rejection_db.unwrap();
    assert!((dc - p_db).abs() < 1e-6, "{dc}");
}

/// A follower's closed-loop gain with the common-mode error, from the loop
/// algebra: V(+) = Vin, V(−) = Vout, V_cm = (Vin + Vout)/2, and
/// Vout = A·(Vin + κ·V_cm − Vout), so H = A(1 + κ/2)/(1 + A(1 − κ/2)).
fn follower_gain(a: C64, kappa: C64) -> C64 {
    let one = C64::new(1.0, 0.0);
    a * (one + kappa / 2.0) / (one + a * (one - kappa / 2.0))
}

#[test]
fn a_followers_gain_moves_by_its_common_mode_error() {
    // Common practice, first order: dc_gain = (1 + 1/c)/(1 + 1/a0).
    let (c_db, a0) = (60.0, 1.0e5);
    let c = 1.0 / per_volt(c_db);
    let mut s = in_range(stages::follower());
    s.amp.a0 = a0;
    s.amp.cmrr_db = Some(c_db);
    let e = evaluate(&s);
    let first_order = (1.0 + 1.0 / c) / (1.0 + 1.0 / a0);
    // The terms left out are of second order: 1/c², 1/(c·a0), 1/a0².
    let second = 3.0 * (1.0 / c + 1.0 / a0).powi(2);
    assert_rel("follower dc_gain", e.analysis.dc_gain, first_order, second);
    // The exact loop algebra, to rounding (ro 10 mΩ unloaded: no drop).
    let exact = follower_gain(C64::new(a0, 0.0), C64::new(1.0 / c, 0.0)).re;
    assert_rel("follower dc_gain, exact", e.analysis.dc_gain, exact, 1e-9);
    // The gain error carries it too (the network gain is still 1).
    assert_rel("gain error", e.analysis.gain_error, exact - 1.0, 1e-6);
}

#[test]
fn the_common_mode_error_rises_above_its_corner_in_the_gain() {
    // With a near-ideal amplifier the follower's H − 1 is the error term
    // κ/(1 − κ/2) (from follower_gain with A → ∞), κ = k0·(1 + jf/fc).
    let (c_db, fc) = (80.0, 1.0e3);
    let mut s = fast(stages::follower());
    s.amp.cmrr_db = Some(c_db);
    s.amp.cmrr_corner = Some(fc);
    let circuit = Circuit::new(&s);
    for f in [10.0, 1.0e3, 1.0e4, 1.0e5] {
        let kappa = per_volt(c_db) * C64::new(1.0, f / fc);
        let a = s.amp.a0 / C64::new(1.0, f * s.amp.a0 / s.amp.gbw);
        let want = follower_gain(a, kappa) - 1.0;
        let got = circuit.gain_and_loop(f).0 - 1.0;
        assert_rel(&format!("H − 1 at {f} Hz"), got.norm(), want.norm(), 1e-6);
    }
    // 20 dB a decade well above the corner (closed form of |κ|).
    let err_db = |f: f64| 20.0 * (circuit.gain_and_loop(f).0 - 1.0).norm().log10();
    let slope = err_db(1.0e5) - err_db(1.0e4);
    let want = 10.0 * ((1.0 + 1.0e4) / (1.0 + 1.0e2_f64)).log10();
    assert!((slope - want).abs() < 1e-3, "{slope} against {want}");
}

#[test]
fn the_step_response_sees_the_common_mode_corner() {
    // The follower of `follower_gain` with A = a0/(1 + s·τ1) and
    // κ = k0·(1 + s·τc) is first order with a zero:
    // H = (n0 + n1·s)/(d0 + d1·s), n0 = a0(1 + k0/2), n1 = a0·k0·τc/2,
    // d0 = 1 + a0(1 − k0/2), d1 = τ1 − a0·k0·τc/2. A step V gives
    // y(t) = V·(n0/d0 + (n1/d1 − n0/d0)·e^(−t·d0/d1)) (Laplace tables).
    let (c_db, fc, v) = (60.0, 10.0e3, 0.01);
    let mut s = stages::follower();
    s.amp.cmrr_db = Some(c_db);
    s.amp.cmrr_corner = Some(fc);
    let (a0, k0) = (s.amp.a0, per_volt(c_db));
    let tau1 = a0 / (2.0 * PI * s.amp.gbw);
    let tauc = 1.0 / (2.0 * PI * fc);
    let (n0, n1) = (a0 * (1.0 + k0 / 2.0), a0 * k0 * tauc / 2.0);
    let (d0, d1) = (1.0 + a0 * (1.0 - k0 / 2.0), tau1 - a0 * k0 * tauc / 2.0);
    let y = |t: f64| v * (n0 / d0 + (n1 / d1 - n0 / d0) * (-t * d0 / d1).exp());
    let step = analyze(&s).step;
    let tau = d1 / d0;
    for t in [0.0, 0.3 * tau, tau, 3.0 * tau] {
        let got = step.at(t).expect("inside the window");
        assert!(
            (got - y(t)).abs() < 1e-6 * v,
            "t = {t:e}: {got:e} against {:e}",
            y(t)
        );
    }
    // The jump at t = 0+ is the zero's: n1/d1 of the step (5.3 % here).
    assert!(n1 / d1 > 0.05, "the check needs a visible jump");
    assert_rel("final value", step.final_v.unwrap(), v * n0 / d0, 1e-9);
}

#[test]
fn the_worst_case_offset_adds_the_common_mode_error() {
    // Textbook DC error, with the common-mode error in series with the +
    // input like vos (sign unknown): |Vout| ≤ G·(vos + |V_cm|·k),
    // k = 10^(−c/20), V_cm the pins' DC level. Exactly, around an ideal
    // amplifier: V(−) = Vout/G and Vout = G·(V(+)(1 + k/2) + k·V(−)/2 − e),
    // so V_cm = dc/(1 − k/2) and the error's gain is G/(1 − k/2).
    let (vos, dc, c_db, g) = (1.0e-3, 1.0, 80.0, 10.0);
    let k = per_volt(c_db);
    let mut s = fast(in_range(stages::plain(
        Topology::NonInverting,
        1.0e3,
        9.0e3,
    )));
    s.amp.vos = Some(vos);
    s.source.dc = Some(dc);
    s.amp.cmrr_db = Some(c_db);
    let e = evaluate(&s);
    let bound = |vos: f64| g * (vos + k * dc / (1.0 - k / 2.0)) / (1.0 - k / 2.0);
    let got = e.analysis.limits.out_offset_max_v.unwrap();
    assert_rel("offset", got, bound(vos), 1e-7);
    // To first order the textbook's G·(vos + dc·k).
    assert_rel("offset, first order", got, g * (vos + dc * k), k);
    // Without vos, ib or ios, the common-mode error alone defines it.
    s.amp.vos = None;
    let e = evaluate(&s);
    assert_rel(
        "offset, cm alone",
        e.analysis.limits.out_offset_max_v.unwrap(),
        bound(0.0),
        1e-7,
    );
}

#[test]
fn the_spec_holds_the_supply_rejection() {
    let mut s = with_ripple(
        in_range(stages::plain(Topology::NonInverting, 1.0e3, 9.0e3)),
        0.05,
        Some(1.0e3),
    );
    s.amp.psrr_db = Some(80.0);
    // 80 dB less the noise gain's 20 dB: about 60 dB at the output.
    for (limit, fails) in [(50.0, false), (70.0, true)] {
        s.spec = Some(Spec {
            supply_rejection_min_db: Some(limit),
            ..Spec::default()
        });
        let e = evaluate(&s);
        let spec = e.warnings.iter().find(|w| w.code == "spec");
        assert_eq!(spec.is_some(), fails, "{limit}: {:?}", e.warnings);
        if let Some(w) = spec {
            assert!(w.text.contains("supply_rejection_min_db"), "{}", w.text);
        }
    }
    // A limit without the amplifier's figure is refused, by field.
    s.amp.psrr_db = None;
    let problems = s.validate().unwrap_err();
    assert_eq!(problems[0].field, "spec.supply_rejection_min_db");
}

/// The new fields, one to a line so each field's line and column are known.
const EXAMPLE: &str = r#"(
    title: "rejection",
    stage: (topology: NonInverting, rg: 1000.0, rf: 10000.0, series: E24, tolerance: 0.01),
    amp: (a0: 100000.0, gbw: 1.0e6, ro: 75.0, vnoise: 10.0e-9, inoise: 1.0e-12,
        cmrr_db: 90.0,
        cmrr_corner: 1.0e3,
        psrr_db: 100.0,
        psrr_corner: 100.0),
    source: (r: 100.0),
    load: (r: 10000.0),
    supply: (neg: -15.0, pos: 15.0,
        ripple: 0.05,
        ripple_hz: 100.0e3),
    temp_c: 25.0,
    band: (10.0, 100000.0),
    spec: (
        supply_rejection_min_db: 40.0),
)
"#;

#[test]
fn the_fields_load_save_and_are_refused_out_of_range_with_position() {
    let s = Scenario::from_ron(EXAMPLE, None).unwrap();
    assert_eq!(s.amp.cmrr_db, Some(90.0));
    assert_eq!(s.supply.and_then(|x| x.ripple_hz), Some(100.0e3));
    assert_eq!(Scenario::from_ron(&s.to_ron(), None).unwrap(), s);
    // README ranges: 0..200 dB, corners 1 mHz..1 GHz, ripple 0..100 V.
    let cases = [
        ("cmrr_db: 90.0", "cmrr_db: 250.0", "amp.cmrr_db"),
        (
            "cmrr_corner: 1.0e3",
            "cmrr_corner: 2.0e9",
            "amp.cmrr_corner",
        ),
        ("psrr_db: 100.0", "psrr_db: -1.0", "amp.psrr_db"),
        (
            "psrr_corner: 100.0",
            "psrr_corner: 1.0e-4",
            "amp.psrr_corner",
        ),
        ("ripple: 0.05", "ripple: 101.0", "supply.ripple"),
        ("ripple_hz: 100.0e3", "ripple_hz: 0.0", "supply.ripple_hz"),
        (
            "supply_rejection_min_db: 40.0",
            "supply_rejection_min_db: 201.0",
            "spec.supply_rejection_min_db",
        ),
    ];
    for (good, bad, field) in cases {
        let text = EXAMPLE.replace(good, bad);
        let e = Scenario::from_ron(&text, Some("t.ron")).expect_err(bad);
        assert_eq!(e.field.as_deref(), Some(field), "{e}");
        let key = field.rsplit('.').next().unwrap();
        let (line, col) = text
            .lines()
            .enumerate()
            .find_map(|(i, l)| l.find(&format!(" {key}:")).map(|c| (i + 1, c + 2)))
            .unwrap();
        assert!(
            e.to_string()
                .starts_with(&format!("t.ron:{line}:{col}: field `{field}`: ")),
            "{e}"
        );
    }
}

#[test]
fn without_the_fields_nothing_changes() {
    // Absent means infinite rejection: the same figures as before, and
    // no supply figures.
    for (s, _) in kinds() {
        let mut with = s.clone();
        with.amp.cmrr_db = Some(200.0);
        with.amp.psrr_db = Some(200.0);
        let (a, b) = (analyze(&s), analyze(&with));
        assert_eq!(a.supply_rejection_db, None);
        assert_eq!(a.ripple_out_v, None);
        // 200 dB is 1e-10 per volt: the gain moves by less than 1e-9.
        assert_rel("dc_gain", b.dc_gain, a.dc_gain, 1e-9);
    }
}

#[test]
fn the_lowest_accepted_cmrr_keeps_a_followers_feedback_negative() {
    // A follower whose pins are tied by rin = 10 TΩ against a 10 TΩ
    // source: V+ = (Vin + Vout)/2 and V_cm = Vin/4 + 3·Vout/4, so the DC
    // loop is a0·(1/2 − 3κ/4) and Zout = ro/(1 + a0·(1/2 − 3κ/4)) (the
    // 20 TΩ load on the output is negligible; first-order loop algebra,
    // common practice). Below κ = 2/3 (3.5 dB) the feedback turns positive
    // and Zout negative: the accepted range starts at 20 dB (κ = 0.1).
    let mut s = in_range(stages::follower());
    (s.amp.a0, s.amp.gbw) = (1e6, 1e6);
    s.amp.rin = Some(1e13);
    s.source.r = Some(1e13);
    s.amp.cmrr_db = Some(20.0);
    assert!(s.validate().is_ok(), "{:?}", s.validate());
    let kappa = per_volt(20.0);
    let a = analyze(&s);
    let want = s.amp.ro / (1.0 + s.amp.a0 * (0.5 - 0.75 * kappa));
    assert_rel("Zout at DC", a.zout_dc_ohm, want, 1e-6);
    assert!(!a.unstable());
    for db in [0.0, 3.0, 19.9] {
        s.amp.cmrr_db = Some(db);
        let refused = s.validate().expect_err("a CMRR below 20 dB is refused");
        assert!(
            format!("{refused:?}").contains("amp.cmrr_db"),
            "{refused:?}"
        );
    }
}
