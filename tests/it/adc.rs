//! Driving a converter: the step settled to a threshold (N bits or a
//! fraction) and the sampling capacitor's kick, against closed forms
//! (first-order settling, charge conservation), the file rules of the
//! new fields and their figures in the reports.

use crate::support::closed_forms::assert_rel;
use crate::support::stages::{fast, follower};

use loopwright::engine::analyze;
use loopwright::model::scenario::{Feedback, Sample, Step};
use loopwright::model::Scenario;
use std::f64::consts::PI;

/// The one-pole follower of `step_response::first_order_rise_and_settling`
/// settles to ε in τ·ln(1/ε) (first-order step response, common
/// practice); for 16 bits ε = 2^−17, ln 2^17 = 11.78 time constants.
#[test]
fn first_order_settles_to_sixteen_bits_in_11_78_tau() {
    let mut s = follower();
    let (a0, gbw) = (s.amp.a0, s.amp.gbw);
    let tau = 1.0 / (2.0 * PI * gbw / a0 * (1.0 + a0));
    s.step = Some(Step {
        settle_bits: Some(16),
        ..Step::of(1.0)
    });
    let r = analyze(&s).step;
    let eps = 2f64.powi(-17);
    assert_rel("threshold", r.threshold.unwrap(), eps, 1e-15);
    // ln 2^17 = 17·ln 2 = 11.78 (common practice).
    assert_rel("time constants", (1.0 / eps).ln(), 11.78, 1e-3);
    // Within the solver's stated accuracy: the band is crossed within
    // 1e-4 of its width, a time error of 1e-4·τ in 11.78·τ.
    assert_rel(
        "settle_to_s",
        r.settle_to_s.unwrap(),
        tau * (1.0 / eps).ln(),
        2e-5,
    );
    // The same threshold as a fraction gives the same time.
    s.step = Some(Step {
        settle_to: Some(eps),
        ..Step::of(1.0)
    });
    let again = analyze(&s).step.settle_to_s.unwrap();
    assert_rel("settle_to", again, tau * (1.0 / eps).ln(), 2e-5);
}

/// Without a threshold the figure is undefined, and below the finest band
/// the solver resolves (1 ppm) it is not invented.
#[test]
fn no_threshold_no_figure() {
    let s = follower();
    assert_eq!(analyze(&s).step.settle_to_s, None);
}

/// The charge-sharing stage of issue 27: an ideal driver (a0 1e9, gbw
/// 10 GHz, ro 1 mΩ) at 2 V behind riso 100 Ω (feedback at the pin), load
/// c 320 pF, a discharged 16 pF sampling capacitor through a 1 mΩ switch,
/// a 16-bit converter of 5 V full scale.
fn charge_sharing(acquire: f64) -> Scenario {
    let mut s = fast(follower());
    s.amp.gbw = 10.0e9;
    s.amp.ro = 1.0e-3;
    s.stage.riso = Some(100.0);
    s.stage.feedback = Feedback::Pin;
    s.load.c = Some(320.0e-12);
    s.source.dc = Some(2.0);
    s.load.sample = Some(Sample {
        c: 16.0e-12,
        r: 1.0e-3,
        from: 0.0,
        full_scale: 5.0,
        bits: 16,
        acquire,
        rate: None,
    });
    s
}

/// Charge conservation: 320 pF at 2 V shares with 16 pF at 0 V, so the
/// load terminal dips by 2·16/336 = 95.24 mV (4.76 %); it then recovers
/// through riso with τ = riso·(C_L + C_s) = 33.6 ns and reaches half an
/// LSB of 16 bits at 5 V (38.15 µV) after τ·ln(95.24 mV/38.15 µV) =
/// 262.8 ns (common practice; recomputed here).
#[test]
fn charge_sharing_dip_and_recovery() {
    let s = charge_sharing(300.0e-9);
    let k = analyze(&s).kick.expect("a sampler gives a kick");
    let (v, cl, cs, riso) = (2.0, 320.0e-12, 16.0e-12, 100.0);
    let dip = v * cs / (cl + cs);
    assert_rel("95.24 mV", dip, 95.24e-3, 1e-4);
    let tau = riso * (cl + cs);
    let half_lsb = 0.5 * 5.0 / 2f64.powi(16);
    assert_rel("38.15 µV", half_lsb, 38.15e-6, 1e-4);
    let t_half = tau * (dip / half_lsb).ln();
    assert_rel("262.8 ns", t_half, 262.8e-9, 1e-3);
    assert_rel("level", k.level_v, v, 1e-8);
    // The dip is read on the samples: the first one after the 15 fs
    // switch transient has recovered by about h/τ (1e-4 at most).
    assert_rel("dip", -k.dip_v.unwrap(), dip, 2e-4);
    assert!(k.dip_v.unwrap() < 0.0, "the load terminal dips");
    assert_rel("settle", k.settle_s.unwrap(), t_half, 1e-3);
    // At 300 ns the error is dip·e^(−300/33.6): 0.013 LSB, a pass.
    let want = dip * (-300.0e-9 / tau).exp();
    assert_rel("error", -k.error_v.unwrap(), want, 1e-3);
    assert_rel(
        "error lsb",
        k.error_lsb.unwrap(),
        want / (2.0 * half_lsb),
        1e-3,
    );
}

/// Midway through the recovery the sampling capacitor's error is
/// dip·e^(−t/τ) (first-order recovery, common practice).
#[test]
fn the_recovery_is_first_order() {
    let s = charge_sharing(100.0e-9);
    let k = analyze(&s).kick.unwrap();
    let dip: f64 = 2.0 * 16.0 / 336.0;
    let tau: f64 = 100.0 * 336.0e-12;
    for t in [20.0e-9, 50.0e-9, 100.0e-9] {
        let want = -dip * (-t / tau).exp();
        assert_rel("cap error", k.cap_error_at(t).unwrap(), want, 1e-4);
        assert_rel("load", k.load_dev_at(t).unwrap(), want, 1e-4);
    }
    // At 100 ns: 95.24 mV·e^(−2.976) = 4.86 mV, 63.6 LSB of 76.29 µV:
    // far from settled.
    let lsb = 5.0 / 2f64.powi(16);
    assert_rel(
        "lsb",
        k.error_lsb.unwrap(),
        dip * (-100.0e-9 / tau).exp() / lsb,
        1e-4,
    );
    assert!(k.error_lsb.unwrap() > 60.0);
}

/// The conversions' average current c·ΔV·rate flows through riso (the
/// stage's DC output resistance with feedback at the pin; the ideal
/// driver's own is 1 mΩ/(1 + 1e9)): 16 pF·2 V·1 MHz = 32 µA, 3.2 mV.
#[test]
fn average_current_dc_error() {
    let mut s = charge_sharing(300.0e-9);
    if let Some(x) = s.load.sample.as_mut() {
        x.rate = Some(1.0e6);
    }
    let k = analyze(&s).kick.unwrap();
    let want = -(16.0e-12 * 2.0 * 1.0e6) * 100.0;
    assert_rel("dc error", k.dc_error_v.unwrap(), want, 1e-6);
    // Without a rate there is none.
    assert_eq!(
        analyze(&charge_sharing(300.0e-9)).kick.unwrap().dc_error_v,
        None
    );
}

/// A capacitor already at the DC level takes no charge: no kick.
#[test]
fn no_charge_no_kick() {
    let mut s = charge_sharing(300.0e-9);
    if let Some(x) = s.load.sample.as_mut() {
        x.from = 2.0;
    }
    let k = analyze(&s).kick.unwrap();
    assert!(k.dip_v.unwrap().abs() < 1e-9, "{:?}", k.dip_v);
    assert_eq!(k.settle_s, Some(0.0));
    assert!(k.error_lsb.unwrap() < 1e-3);
}

/// The sampler is part of the kick only: the frequency analyses and the
/// step are the same with and without it.
#[test]
fn the_sampler_is_invisible_elsewhere() {
    let with = charge_sharing(300.0e-9);
    let mut without = with.clone();
    without.load.sample = None;
    let (a, b) = (analyze(&with), analyze(&without));
    assert_eq!(a.f_3db_hz, b.f_3db_hz);
    assert_eq!(a.phase_margin_deg, b.phase_margin_deg);
    assert_eq!(a.step.settle_s, b.step.settle_s);
    assert!(b.kick.is_none());
}
