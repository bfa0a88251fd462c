//! The photodiode transimpedance stage (issue 21): its second-order
//! closed forms with a single-pole amplifier, its noise against
//! Johnson–Nyquist and Schottky, its fields refused on the wrong kind, and
//! its figures in V/A.
//!
//! Closed forms (second-order analysis of the transimpedance stage with a
//! single-pole amplifier, common practice, from memory): with
//! A(s) = ω_t/s, C_t = C_i + C_f, the transimpedance is
//! Z_T(s) = −R_f·ω_t / (s²·R_f·C_t + s·(1 + ω_t·R_f·C_f) + ω_t), so
//! ω0² = ω_t/(R_f·C_t), 1/Q = ω0·(1/ω_t + R_f·C_f); the loop gain is
//! T(s) = A(s)·(1 + s·R_f·C_f)/(1 + s·R_f·C_t); the maximally flat
//! C_f = √(2·ω_t·R_f·C_i − 1)/(ω_t·R_f).

use crate::support::closed_forms::{assert_rel, unity_crossing};
use loopwright::engine::analysis::analyze;
use loopwright::engine::circuit::Circuit;
use loopwright::judge::evaluate;
use loopwright::model::scenario::{Scenario, Spread};
use loopwright::model::Topology;
use loopwright::output::report::{write_text, Comparison, Report};
use loopwright::study::spread::knobs;
use num_complex::Complex64 as C64;
use std::f64::consts::PI;

/// Boltzmann constant (SI 2019, exact) and the elementary charge (SI
/// 2019, exact).
const K: f64 = 1.380649e-23;
const Q: f64 = 1.602_176_634e-19;

const RF: f64 = 1.0e6;
const CD: f64 = 10.0e-12;
const GBW: f64 = 10.0e6;
const A0: f64 = 1.0e9;

/// The issue's check stage: rf = 1 MΩ, cd = 10 pF, no cin, gbw = 10 MHz,
/// a0 = 1e9, ro = 10 mΩ, no riso, no load; `cf` as given.
fn stage(cf: Option<f64>) -> Scenario {
    let text = format!(
        "(title: \"check\",
          stage: (topology: Transimpedance, rf: {RF:e}, {} series: E24, tolerance: 0.01),
          amp: (a0: {A0:e}, gbw: {GBW:e}, ro: 0.01, vnoise: 10.0e-9, inoise: 1.0e-15),
          source: (cd: {CD:e}, rsh: 1.0e9, idc: 2.0e-9, ipeak: 5.0e-6),
          load: (), temp_c: 25.0, band: (1.0, 1.0e6))",
        cf.map_or(String::new(), |c| format!("cf: {c:e},"))
    );
    Scenario::from_ron(&text, None).unwrap()
}

fn wt() -> f64 {
    2.0 * PI * GBW
}

/// The maximally flat cf (closed form above).
fn flat_cf() -> f64 {
    (2.0 * wt() * RF * CD - 1.0).sqrt() / (wt() * RF)
}

/// The loop gain of the closed form, with the amplifier's DC pole
/// (A = a0/(1 + s·a0/ω_t)).
fn loop_gain(f: f64, cf: f64) -> C64 {
    let s = C64::new(0.0, 2.0 * PI * f);
    let a = A0 / (1.0 + s * A0 / wt());
    a * (1.0 + s * RF * cf) / (1.0 + s * RF * (CD + cf))
}

/// (crossover Hz, phase margin °) of the closed-form loop gain.
fn margin(cf: f64) -> (f64, f64) {
    let fc = unity_crossing(1.0, 1.0e9, |f| loop_gain(f, cf).norm());
    (fc, 180.0 + loop_gain(fc, cf).arg().to_degrees())
}

/// Q and f0 of the closed form.
fn q_f0(cf: f64) -> (f64, f64) {
    let w0 = (wt() / (RF * (CD + cf))).sqrt();
    (1.0 / (w0 * (1.0 / wt() + RF * cf)), w0 / (2.0 * PI))
}

/// The peaking of a second-order low-pass, dB: Q/√(1 − 1/(4Q²)) above
/// Q = 1/√2 (textbook formula).
fn peaking_db(q: f64) -> f64 {
    if q <= std::f64::consts::FRAC_1_SQRT_2 {
        0.0
    } else {
        20.0 * (q / (1.0 - 1.0 / (4.0 * q * q)).sqrt()).log10()
    }
}

/// With the maximally flat cf: Q = 0.7071, f−3dB = f0 = 388.15 kHz within
/// 0.1 %, no peaking, crossover 591.3 kHz, phase margin 65.95° (the
/// issue's figures, recomputed here from the closed forms).
#[test]
fn the_flat_cf_gives_a_butterworth_response() {
    let cf = flat_cf();
    assert_rel("flat cf", cf, 0.5640e-12, 1e-3);
    let (q, f0) = q_f0(cf);
    assert_rel("Q", q, std::f64::consts::FRAC_1_SQRT_2, 1e-9);
    assert_rel("f0", f0, 388.15e3, 1e-4);
    let (fc, pm) = margin(cf);
    assert_rel("closed-form crossover", fc, 591.3e3, 1e-3);
    assert!((pm - 65.95).abs() < 0.01, "closed-form margin {pm}");

    let a = analyze(&stage(Some(cf)));
    assert_rel("f−3dB", a.f_3db_hz.unwrap(), f0, 1e-3);
    assert!(a.peaking_db < 0.005, "peaking {}", a.peaking_db);
    assert_rel("crossover", a.crossover_hz.unwrap(), fc, 1e-3);
    assert!((a.phase_margin_deg.unwrap() - pm).abs() < 0.05);
    // The DC transimpedance: −rf within 1/loop gain (−rf·T/(1+T)).
    assert_rel("dc gain", a.dc_gain, -RF, 1e-6);
}

/// The common rule cf = √(C_i/(2π·R_f·gbw)) = 0.399 pF: phase margin
/// 52.8°, peaking 1.14 dB (closed forms recomputed).
#[test]
fn the_common_rule_cf_peaks() {
    let cf = (CD / (2.0 * PI * RF * GBW)).sqrt();
    assert_rel("rule cf", cf, 0.399e-12, 1e-3);
    let (q, _) = q_f0(cf);
    let (_, pm) = margin(cf);
    assert!((pm - 52.8).abs() < 0.05, "closed-form margin {pm}");
    assert!((peaking_db(q) - 1.14).abs() < 0.01, "closed-form peaking");

    let a = analyze(&stage(Some(cf)));
    assert!((a.phase_margin_deg.unwrap() - pm).abs() < 0.05);
    assert!(
        (a.peaking_db - peaking_db(q)).abs() < 0.01,
        "{}",
        a.peaking_db
    );
}

/// Without cf the loop is all but unstable: about 2.3° of margin
/// (T = A/(1 + s·R_f·C_i)).
#[test]
fn without_cf_the_margin_is_tiny() {
    let (_, pm) = margin(0.0);
    assert!((pm - 2.3).abs() < 0.1, "closed-form margin {pm}");
    let a = analyze(&stage(None));
    assert!((a.phase_margin_deg.unwrap() - pm).abs() < 0.05);
}

/// The input-referred current density of the closed form: every current
/// at the − node refers to itself; en through |1/Z_f + 1/Z_i| (Z_f = rf ∥
/// cf, Z_i = rsh ∥ cd).
fn input_density_sq(f: f64, cf: f64, s: &Scenario) -> f64 {
    let kt4 = 4.0 * K * (s.temp_c + 273.15);
    let (rsh, idc) = (s.source.rsh.unwrap(), s.source.idc.unwrap());
    let (en, inn) = (s.amp.vnoise, s.amp.inoise);
    let w = 2.0 * PI * f;
    let y = C64::new(1.0 / RF + 1.0 / rsh, w * (cf + CD));
    kt4 / RF + kt4 / rsh + inn * inn + 2.0 * Q * idc.abs() + en * en * y.norm_sqr()
}

/// Well below 1/(2π(R_f‖R_sh)(C_i + C_f)) the output density is
/// R_f·√(4kT/R_f + i_n² + 2q·I_dc + 4kT/R_sh + (e_n/(R_f‖R_sh))²)
/// (Johnson–Nyquist and Schottky).
#[test]
fn low_frequency_noise_density() {
    let cf = flat_cf();
    let s = stage(Some(cf));
    let rsh = s.source.rsh.unwrap();
    let par = RF * rsh / (RF + rsh);
    let kt4 = 4.0 * K * (s.temp_c + 273.15);
    let (en, inn, idc) = (s.amp.vnoise, s.amp.inoise, s.source.idc.unwrap());
    let want = RF * (kt4 / RF + inn * inn + 2.0 * Q * idc + kt4 / rsh + (en / par).powi(2)).sqrt();
    let got = Circuit::new(&s).eval(1.0).unwrap().noise_density();
    assert_rel("density at 1 Hz", got, want, 1e-4);
}

/// The input-referred figures: the density at 1 kHz and the rms over the
/// band, against the closed form integrated exactly (white terms times the
/// bandwidth, the en term's ω² part as (f2³ − f1³)/3).
#[test]
fn input_referred_noise() {
    let cf = flat_cf();
    let s = stage(Some(cf));
    let a = analyze(&s);
    let want_1k = input_density_sq(1.0e3, cf, &s).sqrt();
    assert_rel(
        "in at 1 kHz",
        a.noise_current_density_1khz.unwrap(),
        want_1k,
        1e-4,
    );
    let (f1, f2) = s.band;
    let white = input_density_sq(0.0, cf, &s);
    let en2 = s.amp.vnoise.powi(2);
    let c = 2.0 * PI * (cf + CD);
    let power = white * (f2 - f1) + en2 * c * c * (f2.powi(3) - f1.powi(3)) / 3.0;
    assert_rel(
        "input rms",
        a.noise_current_rms.unwrap(),
        power.sqrt(),
        2e-3,
    );
    // The voltage kinds have neither.
    let v = analyze(&crate::support::stages::plain(
        Topology::Inverting,
        1e3,
        1e4,
    ));
    assert!(v.noise_current_density_1khz.is_none() && v.noise_current_rms.is_none());
}

/// The shot noise of idc is a source of its own, 2q·|idc| (Schottky),
/// carried to the output like the signal (|Z_T| at low frequency ≈ rf).
#[test]
fn shot_noise_is_listed() {
    let s = stage(Some(flat_cf()));
    let a = analyze(&s);
    let shot = a.noise_sources.iter().find(|n| n.key == "shot").unwrap();
    let (f1, f2) = s.band;
    // Over a band well inside f0 the output rms is ≈ rf·√(2qI·B); the
    // band runs past f0 here, so compare only the order and the sign.
    let flat = RF * (2.0 * Q * 2.0e-9 * (f2 - f1)).sqrt();
    assert!(
        shot.rms > 0.5 * flat && shot.rms < 1.5 * flat,
        "{}",
        shot.rms
    );
    assert!(a.noise_sources.iter().any(|n| n.key == "rsh"));
}

/// The source fields belong to one kind of input each: refused on the
/// other, naming the field and its line.
#[test]
fn fields_are_refused_on_the_other_kind() {
    let tia = "(title: \"t\",\n stage: (topology: Transimpedance, rf: 1.0e6, series: E24, tolerance: 0.01),\n amp: (a0: 1.0e6, gbw: 1.0e6, ro: 10.0, vnoise: 1.0e-8, inoise: 1.0e-15),\n source: (r: 50.0, cd: 1.0e-11),\n load: (), temp_c: 25.0, band: (1.0, 1.0e5))";
    let e = Scenario::from_ron(tia, None).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("source.r"), "{e}");
    assert_eq!(e.line, Some(4), "{e}");
    assert!(e.to_string().contains("current input"), "{e}");

    let volt = tia.replace(
        "Transimpedance, rf: 1.0e6",
        "Inverting, rg: 1.0e3, rf: 1.0e4",
    );
    let e = Scenario::from_ron(&volt, None).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("source.cd"), "{e}");
    assert!(e.to_string().contains("voltage input"), "{e}");

    // Ranges: rsh 0 and cd 2 µF are refused; a voltage stage's gain target
    // beyond 1e9 too, a transimpedance's up to 1e13 accepted.
    let ok = tia.replace("r: 50.0, ", "");
    for (bad, field) in [
        ("cd: 1.0e-11", "cd: 2.0e-6"),
        ("cd: 1.0e-11", "cd: 1.0e-11, rsh: 0.0"),
        ("cd: 1.0e-11", "cd: 1.0e-11, ipeak: 2.0"),
        ("cd: 1.0e-11", "cd: 1.0e-11, idc: 0.1"),
    ] {
        let text = ok.replace(bad, field);
        assert!(Scenario::from_ron(&text, None).is_err(), "{field}");
    }
    let mut s = Scenario::from_ron(&ok, None).unwrap();
    s.spec = Some(Default::default());
    s.spec.as_mut().unwrap().gain_target = Some(-1.0e12);
    assert!(s.validate().is_ok());
    s.stage.topology = Topology::Inverting;
    s.stage.rg = Some(1.0e3);
    s.source.cd = None;
    assert!(s.validate().is_err());
}

/// The fields are kept on save.
#[test]
fn saving_keeps_the_fields() {
    let mut s = stage(Some(0.56e-12));
    s.source.bias = Some(-5.0);
    s.step = Some(loopwright::model::scenario::Step {
        size_a: Some(2.0e-6),
        ..Default::default()
    });
    s.spread = Some(Spread {
        cd_tol: Some(0.2),
        ..Default::default()
    });
    let back = Scenario::from_ron(&s.to_ron(), None).unwrap();
    assert_eq!(back, s);
}

/// The report reads the gains in ohms with their level in dBΩ, and every
/// report names its gain unit; the step is in amperes.
#[test]
fn the_report_speaks_in_ohms() {
    let s = stage(Some(0.56e-12));
    let e = evaluate(&s);
    let r = Report::new(&s, &e, &[]);
    let mut out = Vec::new();
    write_text(&r, &s, &e, &mut out).unwrap();
    let text = String::from_utf8(out).unwrap();
    // −rf·T/(1+T) with T ≈ 1e9: −1.000 MΩ; 20·log10(1e6) = 120 dBΩ.
    assert!(
        text.contains("transimpedance     −1.000 MΩ (120.0 dBΩ)"),
        "{text}"
    );
    assert!(text.contains("step size          1 µA"), "{text}");
    let json = serde_json::to_value(&r).unwrap();
    assert_eq!(json["gain_unit"], "V/A");
    assert_eq!(json["step"]["size_a"], 1.0e-6);
    assert!(json["step"].get("size_v").is_none());
    let v = crate::support::stages::plain(Topology::Inverting, 1e3, 1e4);
    let ev = evaluate(&v);
    let jv = serde_json::to_value(Report::new(&v, &ev, &[])).unwrap();
    assert_eq!(jv["gain_unit"], "V/V");
    assert!(jv["noise_current_rms"].is_null());

    // A B − A across different units means nothing: "—".
    let mut out = Vec::new();
    Comparison::new(&v, &ev, &s, &e)
        .write_text(&mut out)
        .unwrap();
    let text = String::from_utf8(out).unwrap();
    let row = text.lines().find(|l| l.starts_with("DC gain")).unwrap();
    assert!(row.trim_end().ends_with('—'), "{row}");
}

/// spread.cd_tol spreads the photodiode's capacitance.
#[test]
fn cd_spreads_with_its_own_tolerance() {
    let mut s = stage(Some(0.56e-12));
    s.spread = Some(Spread {
        cd_tol: Some(0.2),
        ..Default::default()
    });
    let k = knobs(&s);
    let cd = k.iter().find(|k| k.field == "source.cd").unwrap();
    assert_rel("cd low", cd.lo, CD * 0.8, 1e-12);
    assert_rel("cd high", cd.hi, CD * 1.2, 1e-12);
}

/// The −3 dB frequency of a second-order low-pass from ω0 and Q
/// (textbook formula): ω3 = ω0·√(1 − 1/(2Q²) + √((1 − 1/(2Q²))² + 1)).
fn f_3db(cf: f64) -> f64 {
    let (q, f0) = q_f0(cf);
    let a = 1.0 - 1.0 / (2.0 * q * q);
    f0 * (a + (a * a + 1.0).sqrt()).sqrt()
}

/// stabilize offers the maximally flat cf: on E12 the flat 0.564 pF gives
/// 0.56 pF (no peaking to 0.01 dB) and the next value up, 0.68 pF, whose
/// f−3dB is about 19 % lower (closed forms recomputed).
#[test]
fn stabilize_offers_the_flat_cf() {
    use loopwright::study::stabilize::{options, Flat, Part};
    let s = stage(None);
    let o = options(&s, 60.0).unwrap();
    let Some(Flat::Cf(c)) = o.flat else {
        panic!("no flat cf: {:?}", o.flat)
    };
    assert_rel("flat cf", c, flat_cf(), 1e-12);
    let rows: Vec<_> = o
        .options
        .iter()
        .filter(|f| f.part == Part::CfFlat)
        .collect();
    assert_eq!(rows.len(), 2);
    assert_rel("nearest E12", rows[0].value, 0.56e-12, 1e-9);
    assert_rel("next up", rows[1].value, 0.68e-12, 1e-9);
    assert!(rows[0].peaking_db < 0.01, "{}", rows[0].peaking_db);
    assert_rel(
        "f−3dB at 0.56 pF",
        rows[0].f_3db_hz.unwrap(),
        f_3db(0.56e-12),
        2e-3,
    );
    assert_rel(
        "f−3dB at 0.68 pF",
        rows[1].f_3db_hz.unwrap(),
        f_3db(0.68e-12),
        2e-3,
    );
    let lower = 1.0 - f_3db(0.68e-12) / f_3db(0.56e-12);
    assert!((lower - 0.19).abs() < 0.01, "{lower}");
    let text = loopwright::output::helper_tables::stabilize_output(&s, 60.0, false).unwrap();
    let text = String::from_utf8(text).unwrap();
    assert!(text.contains("maximally flat cf 0.564 pF"), "{text}");

    // 2·ω_t·rf·C_i ≤ 1: a flat response needs no cf.
    let mut small = s.clone();
    small.stage.rf = Some(1.0e3);
    small.source.cd = Some(1.0e-15);
    let o = options(&small, 60.0).unwrap();
    assert_eq!(o.flat, Some(Flat::NotNeeded));
    assert!(o.options.iter().all(|f| f.part != Part::CfFlat));
}

/// The phase-margin warning names the flat cf as the fix; `pairs` says
/// a transimpedance has nothing to pair.
#[test]
fn the_warning_and_pairs_name_the_kind() {
    let e = evaluate(&stage(None));
    let w = e
        .warnings
        .iter()
        .find(|w| w.code == loopwright::judge::Code::PhaseMargin)
        .expect("a phase-margin warning");
    assert!(w.text.contains("maximally flat 0.564 pF"), "{}", w.text);
    let err = loopwright::commands::parse::parse_pair_topology("Transimpedance").unwrap_err();
    assert!(format!("{err:#}").contains("nothing to pair"), "{err:#}");
}

/// Switching kind keeps the parts both kinds have (rf, cf) and leaves a
/// valid stage: the other input's source fields go, a voltage input gets
/// its source resistance.
#[test]
fn switching_kind_keeps_shared_parts() {
    use loopwright::model::params::set_topology;
    let s = Scenario::load(std::path::Path::new("scenarios/light_barrier_receiver.ron")).unwrap();
    let mut v = s.clone();
    set_topology(&mut v, Topology::NonInverting);
    assert_eq!(v.stage.rf, s.stage.rf);
    assert_eq!(v.stage.cf, s.stage.cf);
    assert!(v.source.cd.is_none() && v.source.idc.is_none() && v.source.r.is_some());
    assert!(v.validate().is_ok(), "{:?}", v.validate());
    let mut back = v.clone();
    set_topology(&mut back, Topology::Transimpedance);
    assert_eq!(back.stage.rf, s.stage.rf);
    assert!(back.source.r.is_none() && back.source.dc.is_none());
    assert!(back.validate().is_ok(), "{:?}", back.validate());
}

/// A stage for the input impedance: a slow amplifier (a0 = 1e3, gbw =
/// 1 MHz, its pole at 1 kHz) so that Zin is about a kilohm, beside a
/// diode whose rsh (1 kΩ) and cd (1 µF) would halve it or swamp it if
/// they were counted; ro 50 Ω, no rin, no cin, no cf.
fn zin_stage(extra: &str) -> Scenario {
    let text = format!(
        "(title: \"zin\",
          stage: (topology: Transimpedance, rf: 1.0e6, series: E24, tolerance: 0.01{extra}),
          amp: (a0: 1.0e3, gbw: 1.0e6, ro: 50.0, vnoise: 1.0e-9, inoise: 0.0),
          source: (cd: 1.0e-6, rsh: 1000.0, idc: 0.0),
          load: (), temp_c: 25.0, band: (1.0, 1.0e4))"
    );
    Scenario::from_ron(&text, None).unwrap()
}

/// `zin_dc_ohm` is what the current source looks into at the − input
/// with cd and rsh removed (the issue's definition). Derivation (nodal
/// analysis, no rin): the current I into the − node runs through rf to
/// the amplifier's output, which is a Thevenin source −A·V−·k behind
/// R_th = ro ∥ R_l (R_l the path to ground after the pin: riso + the
/// load, k = R_l/(R_l + ro); with no load, k = 1, R_th = ro). So
/// V− = −A·k·V− + I·(rf + R_th): Zin = (rf + R_th)/(1 + A·k). With the
/// feedback taken after riso and no load, riso carries I too:
/// Zin = (rf + riso + ro)/(1 + A).
#[test]
fn zin_leaves_out_the_diode() {
    let (rf, ro, a0) = (1.0e6, 50.0, 1.0e3);
    let a = analyze(&zin_stage(""));
    assert_rel(
        "Zin, no load",
        a.zin_dc_ohm.unwrap(),
        (rf + ro) / (1.0 + a0),
        1e-6,
    );
    // riso in series with rf (feedback after it), no load.
    let a = analyze(&zin_stage(", riso: 100.0, feedback: Load"));
    let want = (rf + 100.0 + ro) / (1.0 + a0);
    assert_rel(
        "Zin, feedback at the load",
        a.zin_dc_ohm.unwrap(),
        want,
        1e-6,
    );
    // riso after the pin into a 1 kΩ load, feedback at the pin.
    let mut s = zin_stage(", riso: 100.0");
    s.load.r = Some(1000.0);
    let rl = 100.0 + 1000.0;
    let (k, r_th) = (rl / (rl + ro), ro * rl / (ro + rl));
    let want = (rf + r_th) / (1.0 + a0 * k);
    assert_rel(
        "Zin, riso into a load",
        analyze(&s).zin_dc_ohm.unwrap(),
        want,
        1e-6,
    );
    // At 1 kHz (the amplifier's pole) cd's 159 Ω would swamp it: the
    // points' Zin leaves it out too. A(s) = a0/(1 + s·a0/ω_t).
    let c = Circuit::new(&zin_stage(""));
    let f = 1.0e3;
    let s = C64::new(0.0, 2.0 * PI * f);
    let a_s = a0 / (1.0 + s * a0 / (2.0 * PI * 1.0e6));
    let want = (rf + ro) / (1.0 + a_s);
    let got = c.eval(f).unwrap().zin.unwrap();
    assert_rel("|Zin| at 1 kHz", got.norm(), want.norm(), 1e-6);
}

/// The workbench reads the transimpedance in its unit (the issue's
/// "transimpedance −1.000 MΩ (120.0 dBΩ)"): the response view's axis
/// and caption and the cursor readout in dBΩ, the figures row in Ω; A/B
/// against a voltage stage, the B − A of the gain is "—".
#[test]
fn the_workbench_speaks_in_ohms() {
    use crate::support::keys::screen_at;
    use loopwright::ui::app::App;
    use loopwright::ui::theme::Theme;
    let s = stage(Some(0.56e-12));
    let app = App::new(vec![(s.clone(), None)], Theme::new(false, false));
    let screen = screen_at(&app, 80, 24);
    // 20·log10(1e6 Ω) = 120 dBΩ: the axis's top tick and the caption.
    assert!(screen.contains("120dBΩ ├"), "{screen}");
    assert!(screen.contains("(120.0dBΩ)"), "{screen}");
    let readout = screen.lines().find(|l| l.starts_with("A @ ")).unwrap();
    assert!(readout.contains("gain 120.0dBΩ∠"), "{readout}");
    assert!(screen.contains("−1.000MΩ"), "{screen}");
    // A voltage stage beside it: no dBΩ on its own, "—" for B − A.
    let v = crate::support::stages::plain(Topology::Inverting, 1e3, 1e4);
    let ab = App::new(vec![(v, None), (s, None)], Theme::new(false, false));
    let screen = screen_at(&ab, 120, 40);
    let delta = screen.lines().find(|l| l.starts_with("Δ ")).unwrap();
    let gain_cell = delta.split_whitespace().nth(1).unwrap();
    assert_eq!(gain_cell, "—", "{screen}");
}

/// The text report's `--at` table and the response figure read the
/// transimpedance in ohms: |Z_T| at 1 kHz is rf (1 MΩ; the loop gain
/// there is about 1e4, a 1e-4 error), and the SVG's gain axis is in dBΩ.
#[test]
fn the_at_table_and_the_figure_speak_in_ohms() {
    use loopwright::output::svg::{self, Evaluated, Look};
    use loopwright::output::views::ViewId;
    let s = stage(Some(0.56e-12));
    let e = evaluate(&s);
    let r = Report::new(&s, &e, &[1.0e3]);
    let mut out = Vec::new();
    write_text(&r, &s, &e, &mut out).unwrap();
    let text = String::from_utf8(out).unwrap();
    let row = text
        .lines()
        .find(|l| l.trim_start().starts_with("1 kHz"))
        .unwrap();
    assert_eq!(row.split_whitespace().nth(2), Some("1"), "{row}");
    assert_eq!(row.split_whitespace().nth(3), Some("MΩ"), "{row}");
    let stage = [Evaluated {
        scenario: &s,
        eval: &e,
    }];
    let svg = svg::render(ViewId::Response.view(), &stage, Look::default()).unwrap();
    assert!(svg.contains("transimpedance (dBΩ)"), "{svg}");
}

/// The workbench's stabilising list (`m`) says what `stabilize` says of
/// the flat cf: its value beside the `cf, flat` rows, or, where
/// 2·ω_t·R_f·C_i ≤ 1, that no cf is needed (the closed form above).
#[test]
fn the_workbench_list_names_the_flat_cf() {
    use crate::support::keys::{key, screen_at};
    use crossterm::event::KeyCode;
    use loopwright::ui::app::App;
    use loopwright::ui::theme::Theme;
    let list = |s: Scenario| {
        let mut app = App::new(vec![(s, None)], Theme::new(false, false));
        app.on_key(key(KeyCode::Char('m')));
        screen_at(&app, 120, 40).replace('│', " ")
    };
    let joined = |t: &str| t.split_whitespace().collect::<Vec<_>>().join(" ");
    // The check stage without cf: the flat cf is 0.564 pF.
    assert!((flat_cf() - 0.564e-12).abs() < 0.0005e-12);
    let screen = joined(&list(stage(None)));
    assert!(screen.contains("cf, flat"), "{screen}");
    assert!(screen.contains("maximally flat cf 0.564 pF"), "{screen}");
    // rf 1 kΩ, cd 1 pF, gbw 10 MHz: 2·ω_t·R_f·C_i = 2·2π·1e7·1e3·1e-12
    // ≈ 0.126 ≤ 1.
    let mut small = stage(None);
    small.stage.rf = Some(1.0e3);
    small.source.cd = Some(1.0e-12);
    assert!(2.0 * wt() * 1.0e3 * 1.0e-12 <= 1.0);
    let screen = joined(&list(small));
    // The note wraps in the overlay: its two halves.
    assert!(screen.contains("no cf is"), "{screen}");
    assert!(screen.contains("needed for a flat response (2·ω_t·rf·C_i ≤ 1)"));
}

/// `spread` reads the transimpedance's DC gain in ohms too: its rows
/// for the 1 MΩ stage (±1 % rf, a uniform spread) say MΩ for the
/// nominal and kΩ for the std (about 1 MΩ·0.01/√3 ≈ 5.8 kΩ, the
/// standard deviation of a uniform on ±a being a/√3).
#[test]
fn spread_reads_the_transimpedance_in_ohms() {
    use loopwright::study::spread::{spread, Run};
    let s = stage(Some(0.56e-12));
    let r = spread(
        &s,
        &Run {
            trials: Some(200),
            ..Run::default()
        },
    );
    let mut out = Vec::new();
    loopwright::output::spread_text::write_spread(&r, "t", &mut out).unwrap();
    let text = String::from_utf8(out).unwrap();
    // Named for the kind (issue 21's leftover): the row reads in ohms.
    let row = text
        .lines()
        .find(|l| l.starts_with("transimpedance"))
        .unwrap();
    let cells: Vec<&str> = row.split_whitespace().collect();
    assert!(cells[1].ends_with("MΩ"), "{row}");
    assert!(cells[3].ends_with("kΩ"), "{row}");
    let std_ohm: f64 = cells[3].trim_end_matches("kΩ").parse::<f64>().unwrap() * 1e3;
    assert_rel(
        "std of the transimpedance",
        std_ohm,
        1.0e6 * 0.01 / 3f64.sqrt(),
        0.2,
    );
}

/// A current input's step is in amperes on the step view and figure, and
/// the envelope view asks for the kind's own peak field.
#[test]
fn the_step_and_envelope_views_name_the_current() {
    use crate::support::keys::{key, screen_at};
    use crossterm::event::KeyCode;
    use loopwright::output::svg::{self, Evaluated, Look};
    use loopwright::output::views::ViewId;
    use loopwright::ui::app::App;
    use loopwright::ui::theme::Theme;
    let mut s = stage(Some(0.56e-12));
    s.source.ipeak = None;
    let e = evaluate(&s);
    let stage_of = [Evaluated {
        scenario: &s,
        eval: &e,
    }];
    // The default current step: 1 µA (the README's step.size_a).
    let svg = svg::render(ViewId::Step.view(), &stage_of, Look::default()).unwrap();
    assert!(svg.contains("1 µA"), "{svg}");
    let needs = (ViewId::Envelope.view().needs)(&stage_of[0]).unwrap();
    assert!(needs.contains("source.ipeak"), "{needs}");
    let mut app = App::new(vec![(s, None)], Theme::new(false, false));
    while app.view != ViewId::Step {
        app.on_key(key(KeyCode::Char('v')));
    }
    let screen = screen_at(&app, 120, 40);
    assert!(screen.contains("1µA step"), "{screen}");
}

/// `compare`, `spread` and the Markdown note name a transimpedance
/// stage's DC gain row "transimpedance", as the report does (its values
/// are in Ω, not a ratio); the JSON keeps the key `dc_gain`.
#[test]
fn compare_spread_and_the_note_name_the_transimpedance() {
    use loopwright::study::spread::{spread, Run};
    let mut a = stage(Some(0.56e-12));
    a.spec = Some(loopwright::model::scenario::Spec {
        gain_error_max: Some(0.05),
        ..Default::default()
    });
    let mut b = a.clone();
    b.stage.rf = Some(1.2e6);
    let (ea, eb) = (evaluate(&a), evaluate(&b));
    let cmp = Comparison::new(&a, &ea, &b, &eb);
    let mut out = Vec::new();
    cmp.write_text(&mut out).unwrap();
    let text = String::from_utf8(out).unwrap();
    let row = text
        .lines()
        .find(|l| l.starts_with("transimpedance"))
        .unwrap_or_else(|| panic!("no transimpedance row:\n{text}"));
    // −rf·T/(1 + T), T ≈ 1e9: −1.000 MΩ and −1.200 MΩ, B − A −200 kΩ.
    assert!(row.contains("MΩ") && row.contains("kΩ"), "{row}");
    assert!(!text.contains("DC gain"), "{text}");
    let json = serde_json::to_value(&cmp).unwrap();
    assert_eq!(json["differences"]["figures"][0]["key"], "dc_gain");

    let r = spread(
        &a,
        &Run {
            trials: Some(50),
            ..Run::default()
        },
    );
    let mut out = Vec::new();
    loopwright::output::spread_text::write_spread(&r, "t", &mut out).unwrap();
    let text = String::from_utf8(out).unwrap();
    assert!(!text.contains("DC gain"), "{text}");
    assert!(
        text.lines().any(|l| l.starts_with("transimpedance")),
        "{text}"
    );

    let mut out = Vec::new();
    loopwright::output::note::write_markdown(&a, &ea, &[], &mut out).unwrap();
    let md = String::from_utf8(out).unwrap();
    assert!(!md.contains("DC gain"), "{md}");
    // The movers' list of the spec section names it too.
    assert!(md.contains("- transimpedance: rf"), "{md}");
}

/// A part the kind does not have is refused where the file gives it, as
/// the other input's fields are: rg on a transimpedance stage (its gain
/// is rf alone) names the field, the kind and its line and column; a
/// pane switch to the kind drops rg, so what it saves loads again.
#[test]
fn rg_is_refused_on_a_transimpedance_stage() {
    use loopwright::model::params::set_topology;
    let text = "(title: \"t\",\n stage: (topology: Transimpedance, rf: 1.0e6,\n    rg: 1.0e3, series: E24, tolerance: 0.01),\n amp: (a0: 1.0e6, gbw: 1.0e6, ro: 10.0, vnoise: 1.0e-8, inoise: 1.0e-15),\n source: (cd: 1.0e-11),\n load: (), temp_c: 25.0, band: (1.0, 1.0e5))";
    let e = Scenario::from_ron(text, Some("t.ron")).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("stage.rg"), "{e}");
    // rg stands on line 3, column 5 of the text.
    assert_eq!((e.line, e.col), (Some(3), Some(5)), "{e}");
    let shown = e.to_string();
    assert!(
        shown.contains("Transimpedance") && shown.contains("t.ron:3:5"),
        "{shown}"
    );
    assert!(Scenario::from_ron(&text.replace("rg: 1.0e3, ", ""), None).is_ok());

    let mut s = crate::support::stages::in_range(crate::support::stages::plain(
        Topology::NonInverting,
        1e3,
        1e6,
    ));
    set_topology(&mut s, Topology::Transimpedance);
    assert_eq!(s.stage.rg, None);
    assert!(
        Scenario::from_ron(&s.to_ron(), None).is_ok(),
        "{}",
        s.to_ron()
    );
}
