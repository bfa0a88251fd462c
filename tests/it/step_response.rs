//! The step response against closed forms of linear systems (standard
//! control and circuit texts), the definition of slew rate, the rails, and
//! the frequency-domain engine (Laplace transform of the waveform).

use crate::support::closed_forms::assert_rel;
use crate::support::stages::{follower, plain};

use loopwright::engine::analysis::Circuit;
use loopwright::engine::analyze;
use loopwright::engine::step::StepResponse;
use loopwright::model::scenario::{Step, Supply};
use loopwright::model::Scenario;
use loopwright::model::Topology;
use loopwright::num::solver::Lu;
use num_complex::Complex64 as C64;
use std::f64::consts::PI;

fn step_of(s: &Scenario) -> StepResponse {
    analyze(s).step
}

/// A one-pole follower: a0 1e5, gbw 1 MHz, no load, no capacitors, so the
/// closed loop is first order with τ = 1/(ωp1·(1 + a0)), ωp1 = 2π·gbw/a0.
#[test]
fn first_order_rise_and_settling() {
    let s = follower();
    let r = step_of(&s);
    let (a0, gbw) = (s.amp.a0, s.amp.gbw);
    let tau = 1.0 / (2.0 * PI * gbw / a0 * (1.0 + a0));
    // Final value: the DC gain a0/(1 + a0) of the follower, times 10 mV.
    assert_rel("final", r.final_v.unwrap(), 0.01 * a0 / (1.0 + a0), 1e-9);
    // y = G(1 − e^{−t/τ}): 10–90 % rise = τ·ln 9 (first-order step
    // response, standard circuit texts), settling to ε = τ·ln(1/ε).
    assert_rel("rise", r.rise_s.unwrap(), tau * 9f64.ln(), 1e-5);
    for (k, eps) in [1e-2f64, 1e-3, 1e-4].iter().enumerate() {
        assert_rel(
            "settle",
            r.settle_s[k].unwrap(),
            tau * (1.0 / eps).ln(),
            1e-5,
        );
    }
    assert_eq!(r.overshoot_pct, Some(0.0));
    assert_eq!(r.peak_time_s, None);
    assert_eq!(r.slew_limited, Some(false));
    assert_eq!(r.clipped, Some(false));
    // ≈ 0.35/f−3dB (the rule of thumb ln 9/(2π) = 0.3497).
    let f3 = analyze(&s).f_3db_hz.unwrap();
    assert_rel(
        "0.35/f3dB",
        r.rise_s.unwrap(),
        9f64.ln() / (2.0 * PI * f3),
        1e-4,
    );
}

/// An inverting first-order stage steps the other way: the figures use
/// y/final, so they read the same.
#[test]
fn inverting_first_order() {
    let s = plain(Topology::Inverting, 1e3, 1e3);
    let r = step_of(&s);
    let (a0, gbw) = (s.amp.a0, s.amp.gbw);
    // β = rg/(rg + rf) for the loop (ideal source at rg's end, ro ≈ 0):
    // closed-loop pole ωp1·(1 + a0·β).
    let beta = 0.5;
    let tau = 1.0 / (2.0 * PI * gbw / a0 * (1.0 + a0 * beta));
    assert!(r.final_v.unwrap() < 0.0);
    assert_rel(
        "final",
        r.final_v.unwrap(),
        -0.01 * a0 * beta / (1.0 + a0 * beta),
        1e-6,
    );
    assert_rel("rise", r.rise_s.unwrap(), tau * 9f64.ln(), 1e-4);
    assert_rel(
        "settle 0.1%",
        r.settle_s[1].unwrap(),
        tau * 1000f64.ln(),
        1e-4,
    );
}

/// A two-pole amplifier with resistive feedback: the closed loop is the
/// standard second-order form s² + (ω1 + ω2)s + ω1ω2(1 + a0β), so
/// ωn² = ω1ω2(1 + a0β), ζ = (ω1 + ω2)/(2ωn); overshoot exp(−πζ/√(1−ζ²)),
/// peak time π/(ωn√(1−ζ²)) (standard control texts).
#[test]
fn second_order_overshoot_and_peak_time() {
    for (fp2, rg, rf) in [(10e6, 1e3, 1e3), (5e6, 1e3, 1e3), (3e6, 1e3, 0.5e3)] {
        let mut s = plain(Topology::NonInverting, rg, rf);
        s.amp.a0 = 1e5;
        s.amp.gbw = 10e6;
        s.amp.fp2 = Some(fp2);
        let r = step_of(&s);
        let w1 = 2.0 * PI * s.amp.gbw / s.amp.a0;
        let w2 = 2.0 * PI * fp2;
        // The loop divider with ro: β = rg/(ro + rf + rg).
        let beta = rg / (s.amp.ro + rf + rg);
        let wn = (w1 * w2 * (1.0 + s.amp.a0 * beta)).sqrt();
        let zeta = (w1 + w2) / (2.0 * wn);
        assert!(zeta < 1.0);
        let os = (-PI * zeta / (1.0 - zeta * zeta).sqrt()).exp();
        let tp = PI / (wn * (1.0 - zeta * zeta).sqrt());
        println!("zeta {zeta}: overshoot {os}");
        // 0.05 percentage points is the bound; we hold 1e-4 pp.
        assert!(
            (r.overshoot_pct.unwrap() - 100.0 * os).abs() < 1e-4,
            "overshoot {:?} vs {}",
            r.overshoot_pct,
            100.0 * os
        );
        // A flat maximum: its time is less sharp than its height (the
        // issue asks 0.5 % of the times; we hold 0.1 %).
        assert_rel("peak time", r.peak_time_s.unwrap(), tp, 1e-3);
        // Settling of the ringing: the last time the closed form
        // y/final = 1 − e^{−ζωn·t}(cos ωd·t + ζ/√(1−ζ²)·sin ωd·t) leaves
        // each band, found by scanning the formula on a fine grid.
        let wd = wn * (1.0 - zeta * zeta).sqrt();
        let q = |t: f64| {
            1.0 - (-zeta * wn * t).exp()
                * ((wd * t).cos() + zeta / (1.0 - zeta * zeta).sqrt() * (wd * t).sin())
        };
        for (k, eps) in [1e-2f64, 1e-3, 1e-4].iter().enumerate() {
            let end = 30.0 / (zeta * wn);
            let n = 2_000_000;
            let last = (0..=n)
                .rev()
                .map(|i| end * i as f64 / n as f64)
                .find(|&t| (q(t) - 1.0).abs() > *eps)
                .unwrap();
            let got = r.settle_s[k].unwrap();
            // Where a ripple peak only just touches the band the time may
            // jump by half a period: then the band error there is checked.
            if (got - last).abs() > 5e-3 * last {
                assert!(
                    ((q(got) - 1.0).abs() - eps).abs() < 1e-3 * eps,
                    "band {eps}: {got} vs {last}"
                );
            } else {
                assert_rel("ringing settling", got, last, 5e-4);
            }
        }
    }
}

/// Slew rate is the largest rate of the output (its definition): a 10 V
/// step on a follower whose linear rate would be 2π·gbw·10 V is
/// slew-limited over its whole edge, 10–90 % in 0.8·ΔV/SR; through ro into
/// RL the load moves at SR·RL/(RL + ro).
#[test]
fn slew_limited_edge() {
    let mut s = follower();
    s.amp.slew = Some(1e6);
    s.step = Some(Step::of(10.0));
    let r = step_of(&s);
    assert_eq!(r.slew_limited, Some(true));
    assert_rel("rise", r.rise_s.unwrap(), 0.8 * 10.0 / 1e6, 1e-4);
    // The same with ro 100 Ω into 1 kΩ.
    s.amp.ro = 100.0;
    s.load.r = Some(1e3);
    let r = step_of(&s);
    let final_v = r.final_v.unwrap();
    let load_rate = 1e6 * 1e3 / (1e3 + 100.0);
    assert_rel(
        "rise into a load",
        r.rise_s.unwrap(),
        0.8 * final_v / load_rate,
        1e-4,
    );
    // A small step on the same stage stays linear.
    s.step = Some(Step::of(0.01));
    assert_eq!(step_of(&s).slew_limited, Some(false));
}

/// A step that would drive the internal output past a rail holds it at the
/// rail minus the swing; the load then sits at that level through the
/// ro/rf/rg divider.
#[test]
fn swing_holds_at_the_rail() {
    let mut s = plain(Topology::NonInverting, 1e3, 1e3);
    s.amp.ro = 50.0;
    s.supply = Some(Supply {
        neg: -5.0,
        pos: 5.0,
        ..Default::default()
    });
    s.amp.swing_pos = Some(0.5);
    s.step = Some(Step::of(3.0));
    let r = step_of(&s);
    assert_eq!(r.clipped, Some(true));
    // x1 = 4.5 V behind ro = 50 Ω into rf + rg = 2 kΩ (divider rule).
    assert_rel(
        "clipped final",
        r.final_v.unwrap(),
        4.5 * 2000.0 / 2050.0,
        1e-9,
    );
    // Inside the rails nothing clips.
    s.step = Some(Step::of(1.0));
    assert_eq!(step_of(&s).clipped, Some(false));
}

/// A slow pole–zero tail: cf across rf on a gain-1.1 stage. With an ideal
/// amplifier H = 1 + rf/(rg·(1 + s·rf·cf)), so y/final − 1 =
/// −(rf/rg)/G·e^{−t/τ}, τ = rf·cf (first-order algebra): the 0.01 %
/// settling time is τ·ln((G − 1)/G/1e-4), thousands of crossover periods.
#[test]
fn slow_tail_sets_the_settling() {
    let mut s = plain(Topology::NonInverting, 10e3, 1e3);
    s.amp.a0 = 1e7;
    s.amp.gbw = 10e6;
    s.stage.cf = Some(1e-6);
    let r = step_of(&s);
    let tau = 1e3 * 1e-6;
    let g = 1.1;
    let part = (g - 1.0) / g;
    for (k, eps) in [1e-2f64, 1e-3, 1e-4].iter().enumerate() {
        assert_rel(
            "tail settling",
            r.settle_s[k].unwrap(),
            tau * (part / eps).ln(),
            2e-3,
        );
    }
    let fc = analyze(&s).crossover_hz.unwrap();
    assert!(r.settle_s[2].unwrap() * fc > 1e3);
}

/// H(σ) for real σ from the frequency-domain engine's own matrix.
fn h_at(s: &Scenario, sigma: f64) -> f64 {
    let c = Circuit::new(s);
    let m = c.net.stamp(C64::new(sigma, 0.0));
    let lu = Lu::factor(m, c.net.dim).unwrap();
    let x = lu.solve(&c.net.drive_rhs());
    x[c.net.out.unwrap()].re
}

/// The time domain agrees with the frequency domain: the Laplace transform
/// of the computed response, ∫ y(t)·e^{−σt} dt, is H(σ)·size/σ (the
/// transform of a step response, standard texts), at a few σ around the
/// crossover; on a ringing stage with cf, cin, a load and source resistance.
#[test]
fn laplace_transform_matches_the_transfer_function() {
    let mut s = plain(Topology::NonInverting, 1e3, 2e3);
    s.amp.fp2 = Some(3e6);
    s.amp.ro = 20.0;
    s.amp.cin = Some(3e-12);
    s.stage.cf = Some(2e-12);
    s.source.r = Some(600.0);
    s.load.r = Some(2e3);
    s.load.c = Some(100e-12);
    let a = analyze(&s);
    let r = &a.step;
    let end = r.window_s().unwrap();
    let fc = a.crossover_hz.unwrap();
    for k in [0.3, 1.0, 3.0] {
        let sigma = 2.0 * PI * fc * k;
        // Simpson's rule on a fine grid, plus the tail beyond the window
        // (y = final there): final·e^{−σT}/σ.
        let n = 400_000;
        let h = end / n as f64;
        let mut sum = 0.0;
        for i in 0..=n {
            let t = i as f64 * h;
            let w = if i == 0 || i == n {
                1.0
            } else if i % 2 == 1 {
                4.0
            } else {
                2.0
            };
            sum += w * r.at(t).unwrap() * (-sigma * t).exp();
        }
        let integral = sum * h / 3.0 + r.final_v.unwrap() * (-sigma * end).exp() / sigma;
        let want = h_at(&s, sigma) * 0.01 / sigma;
        assert_rel("Laplace transform", integral, want, 1e-5);
    }
}

/// Without a step field the step is 10 mV, and the figures follow it.
#[test]
fn default_step_is_ten_millivolts() {
    let s = follower();
    let r = step_of(&s);
    assert_eq!(r.size_v, 0.01);
    let mut big = s.clone();
    big.step = Some(Step::of(-0.02));
    let rb = step_of(&big);
    assert_rel(
        "linear scaling",
        rb.final_v.unwrap(),
        -2.0 * r.final_v.unwrap(),
        1e-12,
    );
    assert_rel("same rise", rb.rise_s.unwrap(), r.rise_s.unwrap(), 1e-6);
}
