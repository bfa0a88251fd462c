//! The stability verdict: it comes from the closed-loop poles, and the
//! phase margin sits on the right branch even when the loop has piled up
//! more than 180° of lag below the first sweep point.

use crate::support::stages::follower;
use loopwright::engine::analysis::{analyze_to, TRIAL};
use loopwright::engine::analyze;
use loopwright::judge::{evaluate, Code};
use loopwright::model::scenario::Spec;
use loopwright::model::{Scenario, Topology};
use loopwright::study::stabilize;
use num_complex::Complex64 as C64;
use proptest::prelude::*;
use proptest::test_runner::{Config, TestRunner};
use std::f64::consts::TAU;

/// The slow follower of the issue: a0 1e6, gbw 100 Hz, fp2 1 mHz, ro 1 kΩ
/// into 1 F (invented values).
fn slow_follower() -> Scenario {
    let mut s = follower();
    s.amp.a0 = 1e6;
    s.amp.gbw = 100.0;
    s.amp.fp2 = Some(1e-3);
    s.amp.ro = 1e3;
    s.load.c = Some(1.0);
    s
}

/// Phase margin of the textbook two-pole model of a follower driving a
/// capacitor through ro: A(s) = a0/((1 + s/wp1)(1 + s/wp2)), wp1 =
/// 2π·gbw/a0, and β = 1/(1 + s·ro·C) (the ro–C divider); arg T is
/// unwrapped continuously from 1e-12 Hz and the margin is 180° + arg T
/// where |T| falls through 1.
fn textbook_margin(a0: f64, gbw: f64, fp2: f64, ro: f64, c: f64) -> f64 {
    let (wp1, wp2) = (TAU * gbw / a0, TAU * fp2);
    let t = |f: f64| {
        let s = C64::new(0.0, TAU * f);
        a0 / ((1.0 + s / wp1) * (1.0 + s / wp2) * (1.0 + s * ro * c))
    };
    let unwrap = |z: C64, prev: f64| {
        let p = z.arg().to_degrees();
        p + 360.0 * ((prev - p) / 360.0).round()
    };
    let (mut f, mut phase) = (1e-12, 0.0);
    loop {
        let next = f * 10f64.powf(0.001);
        let ph = unwrap(t(next), phase);
        if t(next).norm() < 1.0 {
            // Bisect on ln f inside the last step for |T| = 1.
            let (mut lo, mut hi) = (f, next);
            for _ in 0..100 {
                let mid = (lo * hi).sqrt();
                if t(mid).norm() < 1.0 {
                    hi = mid;
                } else {
                    lo = mid;
                }
            }
            return 180.0 + unwrap(t(hi), ph);
        }
        (f, phase) = (next, ph);
    }
}

#[test]
fn slow_follower_into_one_farad_is_unstable_everywhere() {
    let s = slow_follower();
    let want = textbook_margin(1e6, 100.0, 1e-3, 1e3, 1.0);
    assert!((want + 87.0).abs() < 1.0, "textbook margin {want}");
    let a = analyze(&s);
    let pm = a.phase_margin_deg.unwrap();
    assert!((pm - want).abs() < 0.5, "margin {pm}°, textbook {want}°");
    assert_eq!(a.stable, Some(false));
    assert!(a.unstable());
    assert!(a.rightmost_pole_re().unwrap() > 0.0);
    assert!(a.step.samples.is_empty(), "no step response when unstable");
    // The rules, the spec and stabilize read the same verdict.
    let mut checked = s.clone();
    checked.spec = Some(Spec {
        pm_min_deg: Some(45.0),
        ..Spec::default()
    });
    let e = evaluate(&checked);
    let margin = e.warnings.iter().find(|w| w.code == Code::PhaseMargin);
    assert!(margin.is_some_and(|w| w.text.contains("unstable")));
    assert!(e.warnings.iter().any(|w| w.code == Code::Spec));
    let opts = stabilize::options(&s, 60.0).unwrap();
    assert!(!opts.already_met);
}

#[test]
fn shipped_style_stages_stay_stable() {
    // The built-in demo and a plain follower: stable, margins unchanged.
    let a = analyze(&loopwright::files::load::demo());
    assert_eq!(a.stable, Some(true));
    assert!(!a.unstable());
    let a = analyze(&follower());
    assert_eq!(a.stable, Some(true));
}

/// A log-uniform value between lo and hi at fraction u.
fn log_at(lo: f64, hi: f64, u: f64) -> f64 {
    (lo.ln() + u * (hi.ln() - lo.ln())).exp()
}

/// One random stage from 12 fractions (each in [0, 1]) and a topology.
fn random_stage(topology: Topology, u: &[f64]) -> Scenario {
    let opt =
        |k: usize, lo: f64, hi: f64| (u[k] >= 0.3).then(|| log_at(lo, hi, (u[k] - 0.3) / 0.7));
    let mut s = follower();
    s.stage.topology = topology;
    if topology != Topology::Follower {
        s.stage.rg = Some(log_at(10.0, 1e6, u[0]));
        s.stage.rf = Some(log_at(10.0, 1e6, u[1]));
        s.stage.cf = opt(2, 1e-15, 1e-6);
    }
    s.amp.a0 = log_at(1e3, 1e7, u[3]);
    s.amp.gbw = log_at(1.0, 1e9, u[4]);
    s.amp.fp2 = opt(5, 1e-3, 1e10);
    s.amp.ro = log_at(1e-2, 1e5, u[6]);
    s.stage.riso = opt(7, 1e-2, 1e5);
    s.load.c = (u[8] >= 0.2).then(|| log_at(1e-15, 1.0, (u[8] - 0.2) / 0.8));
    s.load.r = opt(9, 10.0, 1e7);
    s.source.r = Some(log_at(1e-3, 1e5, u[10]));
    s.amp.cin = opt(11, 1e-15, 1e-9);
    s.band = (1e3, 1e4);
    s
}

/// Crossings of |T| through 1 on the sweep (and between DC and its first
/// point).
fn crossings(a: &loopwright::engine::Analysis) -> usize {
    let mut above = a.dc.loop_gain.norm() >= 1.0;
    let mut n = 0;
    for p in &a.sweep.points {
        let now = p.loop_gain.norm() >= 1.0;
        n += usize::from(now != above);
        above = now;
    }
    n
}

/// "Phase margin > 0" agrees with "no closed-loop pole in the right
/// half-plane" over 10,000 random stages. Only stages with exactly one
/// crossover are compared: with several, the Nyquist plot enters and
/// leaves the unit circle more than once and the margin at the first
/// crossover alone does not decide stability (the margin is ill-defined).
/// Margins within 0.5° of zero are left out too: there the loop sits on
/// the stability boundary and the pole tolerance decides.
#[test]
fn margin_sign_agrees_with_the_poles() {
    let mut runner = TestRunner::new(Config {
        cases: 10_000,
        failure_persistence: None,
        ..Config::default()
    });
    let topology = prop_oneof![
        Just(Topology::NonInverting),
        Just(Topology::Inverting),
        Just(Topology::Follower)
    ];
    let strategy = (topology, prop::collection::vec(0.0..=1.0f64, 12));
    let compared = std::cell::Cell::new(0usize);
    let result = runner.run(&strategy, |(topology, u)| {
        let s = random_stage(topology, &u);
        let a = analyze_to(&s, TRIAL);
        let (Some(pm), Some(stable)) = (a.phase_margin_deg, a.stable) else {
            return Ok(());
        };
        if crossings(&a) != 1 || pm.abs() < 0.5 {
            return Ok(());
        }
        compared.set(compared.get() + 1);
        prop_assert_eq!(
            pm > 0.0,
            stable,
            "margin {}°, poles {:?}, stage {:?}",
            pm,
            a.poles,
            s
        );
        Ok(())
    });
    result.unwrap();
    // Most random stages have one crossover: the comparison is not empty.
    assert!(compared.get() > 5_000, "compared {}", compared.get());
}

/// A case the random comparison found: the loop crosses 1 below the first
/// sweep point, and three slow real loop poles (below 3 mHz, all in the
/// left half-plane) turn its phase far before that point. The stage is
/// stable, so its margin must read positive, not a turn off (−254°).
#[test]
fn a_crossover_below_the_sweep_keeps_the_margin_on_its_branch() {
    let mut s = follower();
    s.stage.topology = Topology::NonInverting;
    s.stage.rg = Some(46.40962678305127);
    s.stage.rf = Some(271723.4810817983);
    s.amp.a0 = 20157.603049054404;
    s.amp.gbw = 11.234969900565478;
    s.amp.fp2 = Some(0.0021098317078262737);
    s.amp.ro = 23841.470256044875;
    s.load.r = Some(88693.33446232603);
    s.load.c = Some(0.3440032666350695);
    s.source.r = Some(0.001);
    s.band = (1e3, 1e4);
    for a in [analyze_to(&s, TRIAL), analyze(&s)] {
        assert_eq!(a.stable, Some(true), "poles {:?}", a.poles);
        let pm = a.phase_margin_deg.unwrap();
        assert!(pm > 0.0 && pm < 180.0, "margin {pm}");
    }
}
