//! Large-signal truth: a stage past a rail at its operating point, the
//! output-current limit in the step, the swing limit given at the pin into
//! a load, bias currents over temperature, slow tails to 1 ppm, and labels
//! that name what fails. Sources are named beside each check value.

use crate::support::closed_forms::assert_rel;
use crate::support::stages::{follower, in_range, plain};

use loopwright::engine::analyze;
use loopwright::judge::{evaluate, Severity};
use loopwright::model::scenario::{Step, Supply};
use loopwright::model::Scenario;
use loopwright::model::Topology;
use loopwright::output::report::Report;

/// Gain 5 on ±3 V with 0.5 V swing limits and 1 V of source DC: the
/// internal output would sit at 5 V (gain × DC, ideal-amplifier algebra),
/// past the usable +2.5 V.
fn clipped_at_dc() -> Scenario {
    let mut s = in_range(plain(Topology::NonInverting, 1e3, 4e3));
    s.supply = Some(Supply {
        neg: -3.0,
        pos: 3.0,
    });
    s.amp.swing_neg = Some(0.5);
    s.amp.swing_pos = Some(0.5);
    s.source.dc = Some(1.0);
    s
}

#[test]
fn a_stage_past_a_rail_at_dc_has_no_step_figures_and_says_why() {
    let s = clipped_at_dc();
    let e = evaluate(&s);
    let r = &e.analysis.step;
    assert_eq!(r.final_v, None);
    assert_eq!(r.rise_s, None);
    assert_eq!(r.overshoot_pct, None);
    assert_eq!(r.settle_s, [None, None, None]);
    assert_eq!(r.reason, Some("held at the + rail before the step"));
    // JSON: step.reason; the text report says it too.
    let rep = Report::new(&s, &e, &[]);
    assert_eq!(
        rep.step.get("reason").and_then(|v| v.as_str()),
        Some("held at the + rail before the step")
    );
    assert!(rep.step["rise_s"].is_null());
    let mut text = Vec::new();
    loopwright::output::report::write_text(&rep, &s, &e, &mut text).unwrap();
    let text = String::from_utf8(text).unwrap();
    assert!(
        text.contains("held at the + rail before the step"),
        "{text}"
    );
    // No source.peak, yet the swing rule fires on the operating point.
    assert_eq!(s.source.peak, None);
    let w = e
        .warnings
        .iter()
        .find(|w| w.code == "output-swing")
        .expect("output-swing on the DC point alone");
    assert_eq!(w.severity, Severity::Severe);
    assert!(w.text.contains("+ rail"), "{}", w.text);
}

/// A single-supply inverting stage (0–5 V, gain −2) with +1 V of source
/// DC: its output would sit at −2 V (−rf/rg × DC), below the 0 V rail.
#[test]
fn a_single_supply_inverter_clipped_at_dc_has_no_step_figures() {
    let mut s = in_range(plain(Topology::Inverting, 1e3, 2e3));
    s.supply = Some(Supply { neg: 0.0, pos: 5.0 });
    s.source.dc = Some(1.0);
    let e = evaluate(&s);
    assert_eq!(e.analysis.step.overshoot_pct, None);
    assert_eq!(
        e.analysis.step.reason,
        Some("held at the − rail before the step")
    );
    assert!(e.warnings.iter().any(|w| w.code == "output-swing"));
    // Its grounded + input lies at the − rail, outside a range that ends
    // 1 V inside it.
    s.amp.cm_neg = Some(1.0);
    let e = evaluate(&s);
    assert!(
        e.warnings.iter().any(|w| w.code == "input-range"),
        "{:?}",
        e.warnings
    );
}

/// Inside its rails the same stage keeps its figures and gets no reason.
#[test]
fn a_stage_inside_its_rails_keeps_its_step_figures() {
    let mut s = clipped_at_dc();
    s.source.dc = Some(0.1);
    let e = evaluate(&s);
    assert_eq!(e.analysis.step.reason, None);
    assert!(e.analysis.step.rise_s.is_some());
    assert!(!e.warnings.iter().any(|w| w.code == "output-swing"));
}

/// A follower through 20 Ω into 10 nF, a 2 V step, slew 5 V/µs, iout
/// 5 mA: the capacitor charges at I/C (C·dV/dt = I, the capacitor law)
/// = 0.5 V/µs, ten times slower than the slew rate allows.
fn current_stage() -> Scenario {
    let mut s = in_range(follower());
    s.stage.riso = Some(20.0);
    s.load.c = Some(10e-9);
    s.amp.slew = Some(5e6);
    s.amp.iout = Some(5e-3);
    s.step = Some(Step {
        size: Some(2.0),
        size_a: None,
    });
    s
}

#[test]
fn the_output_current_limit_ramps_the_load_at_i_over_c() {
    let s = current_stage();
    let r = analyze(&s).step;
    assert_eq!(r.current_limited, Some(true));
    // The ramp's slope between 20 % and 60 % of the step.
    let (t1, t2) = (crossing(&r, 0.4), crossing(&r, 1.2));
    let slope = 0.8 / (t2 - t1);
    // C·dV/dt = I (capacitor law): 5 mA / 10 nF. The load has no
    // resistor, and the follower's input draws nothing, so all of iout
    // charges the capacitor (ro and riso only shift the internal level).
    assert_rel("ramp", slope, 5e-3 / 10e-9, 1e-3);
    assert_rel("final", r.final_v.unwrap(), 2.0, 1e-4);
    // 10–90 % on that ramp: 1.6 V at 0.5 V/µs.
    assert_rel("rise", r.rise_s.unwrap(), 1.6 / 5e5, 0.02);
    // Without the limit the slew rate sets a ten times faster rise.
    let mut free = s.clone();
    free.amp.iout = None;
    let f = analyze(&free).step;
    assert_eq!(f.current_limited, None);
    assert!(f.rise_s.unwrap() < 0.3 * r.rise_s.unwrap());
}

/// The first time the waveform reaches `v` (bisection on `at`).
fn crossing(r: &loopwright::engine::step::StepResponse, v: f64) -> f64 {
    let end = r.window_s().unwrap();
    let (mut lo, mut hi) = (0.0, end);
    let n = 4000;
    for i in 1..=n {
        let t = end * i as f64 / n as f64;
        if r.at(t).unwrap() >= v {
            hi = t;
            lo = end * (i - 1) as f64 / n as f64;
            break;
        }
    }
    for _ in 0..80 {
        let mid = 0.5 * (lo + hi);
        if r.at(mid).unwrap() >= v {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    0.5 * (lo + hi)
}

/// The same limit sinking: a step down ramps at −I/C.
#[test]
fn the_current_limit_holds_a_falling_step_too() {
    let mut s = current_stage();
    s.step = Some(Step {
        size: Some(-2.0),
        size_a: None,
    });
    let r = analyze(&s).step;
    assert_eq!(r.current_limited, Some(true));
    let (t1, t2) = (crossing_down(&r, -0.4), crossing_down(&r, -1.2));
    assert_rel("ramp", 0.8 / (t2 - t1), 5e-3 / 10e-9, 1e-3);
}

fn crossing_down(r: &loopwright::engine::step::StepResponse, v: f64) -> f64 {
    let flipped = loopwright::engine::step::StepResponse {
        samples: r
            .samples
            .iter()
            .map(|p| loopwright::engine::step::Sample {
                y: -p.y,
                d_before: -p.d_before,
                d_after: -p.d_after,
                ..*p
            })
            .collect(),
        ..r.clone()
    };
    crossing(&flipped, -v)
}

/// A rail-to-rail follower on 0–5 V, ro 300 Ω, 50 mV swing limits,
/// 2.5 ± 2.3 V into 1 kΩ to ground, near-ideal gain.
fn rail_to_rail() -> Scenario {
    let mut s = follower();
    s.amp.a0 = 1e9;
    s.amp.gbw = 1e9;
    s.amp.ro = 300.0;
    s.amp.swing_neg = Some(0.05);
    s.amp.swing_pos = Some(0.05);
    s.supply = Some(Supply { neg: 0.0, pos: 5.0 });
    s.load.r = Some(1e3);
    s.source.dc = Some(2.5);
    s.source.peak = Some(2.3);
    s
}

#[test]
fn a_swing_given_at_the_pin_into_a_load_adds_the_ro_drop_at_that_load() {
    let mut s = rail_to_rail();
    // The load at its peak, 4.8 V, draws 4.8 mA; behind ro the internal
    // output sits at 4.8·(1 + 300/1000) = 6.24 V (divider rule).
    let internal_peak = 4.8 * (1.0 + 300.0 / 1e3);
    let high = evaluate(&s).analysis.limits.headroom_high_v.unwrap();
    // Without swing_load the limit bounds the internal output: 4.95 V.
    assert_rel("headroom", high, 4.95 - internal_peak, 1e-6);
    // Given at the pin into 1 kΩ to mid-supply (2.5 V): the internal
    // output then reaches 4.95 + 300·(4.95 − 2.5)/1000 (Ohm's law).
    s.amp.swing_load = Some(1e3);
    let high = evaluate(&s).analysis.limits.headroom_high_v.unwrap();
    assert_rel(
        "headroom at the pin",
        high,
        4.95 + 300.0 * 2.45 / 1e3 - internal_peak,
        1e-6,
    );
    let low = evaluate(&s).analysis.limits.headroom_low_v.unwrap();
    // The low side: 0.05 − 300·(2.5 − 0.05)/1000, against the trough at
    // 0.2 V, whose 0.2 mA makes the internal output 0.2·1.3 V.
    assert_rel(
        "low headroom",
        low,
        0.2 * 1.3 - (0.05 - 300.0 * 2.45 / 1e3),
        1e-6,
    );
    // The parameter says how to enter a datasheet figure.
    let p = loopwright::model::params::PARAMS
        .iter()
        .find(|p| p.path == "amp.swing_load")
        .unwrap();
    assert!(p.note.unwrap().contains("datasheet"));
}

#[test]
fn bias_currents_double_with_temperature_when_asked() {
    let mut s = in_range(plain(Topology::NonInverting, 10e3, 10e3));
    s.amp.ib = Some(1e-12);
    s.amp.ios = Some(1e-13);
    let at = |s: &Scenario, t: f64| {
        let mut s = s.clone();
        s.temp_c = t;
        let l = evaluate(&s).analysis.limits;
        (l.out_bias_v.unwrap(), l.out_offset_max_v.unwrap())
    };
    let base = at(&s, 25.0);
    // Without ib_doubling: constant.
    assert_eq!(at(&s, 125.0), base);
    // 10 °C per doubling (common practice for FET inputs): ×2^10 at
    // 125 °C, ×2^−4 at −15 °C, on ib and ios alike (no vos here, so the
    // offset bound is all bias and offset current).
    s.amp.ib_doubling = Some(10.0);
    assert_eq!(at(&s, 25.0), base);
    let hot = at(&s, 125.0);
    assert_rel("ib hot", hot.0, base.0 * 1024.0, 1e-12);
    assert_rel("ios hot", hot.1, base.1 * 1024.0, 1e-12);
    let cold = at(&s, -15.0);
    assert_rel("ib cold", cold.0, base.0 / 16.0, 1e-12);
    assert_rel("ios cold", cold.1, base.1 / 16.0, 1e-12);
}

/// Both fields read from a file, are checked against their ranges and
/// are written back when saved.
#[test]
fn the_new_amp_fields_load_validate_and_save() {
    let text = crate::support::stages::CLOSED_FORM_RON.replace(
        "ro: 10.0,",
        "ro: 10.0, swing_load: 2000.0, ib_doubling: 10.0,",
    );
    let s = Scenario::from_ron(&text, Some("t.ron")).unwrap();
    assert_eq!(s.amp.swing_load, Some(2000.0));
    assert_eq!(s.amp.ib_doubling, Some(10.0));
    assert!(s.validate().is_ok());
    let bad = text.replace("ib_doubling: 10.0", "ib_doubling: 1000.0");
    let err = Scenario::from_ron(&bad, Some("t.ron")).unwrap_err();
    assert_eq!(err.field.as_deref(), Some("amp.ib_doubling"), "{err:?}");
    let saved = s.to_ron();
    assert!(saved.contains("swing_load: 2000.0"), "{saved}");
    assert_eq!(Scenario::from_ron(&saved, None).unwrap(), s);
}

/// Gain 2 on ±5 V with 0.5 V swing limits, 1 V DC and a 1.02 V peak:
/// the internal output spans 2 ± 2.04 V (gain × signal), so the + rail
/// has 4.5 − 4.04 = 0.46 V of headroom and the − rail 4.46 V.
fn near_the_plus_rail() -> Scenario {
    let mut s = in_range(plain(Topology::NonInverting, 1e3, 1e3));
    s.amp.a0 = 1e9;
    s.amp.gbw = 1e8;
    s.supply = Some(Supply {
        neg: -5.0,
        pos: 5.0,
    });
    s.amp.swing_neg = Some(0.5);
    s.amp.swing_pos = Some(0.5);
    s.source.dc = Some(1.0);
    s.source.peak = Some(1.02);
    s.spec = Some(loopwright::model::scenario::Spec {
        headroom_min_v: Some(0.5),
        ..Default::default()
    });
    s
}

#[test]
fn the_headroom_spec_warning_names_the_rail_that_fails() {
    let s = near_the_plus_rail();
    let l = evaluate(&s).analysis.limits;
    // Within the loop gain's share at the band edge (a0 1e9, gbw 100 MHz:
    // |1/(1 + 1/(A·β))| departs from 1 by about f/(gbw·β) ≈ 2e-3 in phase,
    // well under 1e-4 in magnitude).
    assert_rel("+ headroom", l.headroom_high_v.unwrap(), 4.5 - 4.04, 1e-4);
    assert_rel(
        "− headroom",
        l.headroom_low_v.unwrap(),
        2.0 - 2.04 + 4.5,
        1e-4,
    );
    let w = evaluate(&s)
        .warnings
        .into_iter()
        .find(|w| w.code == "spec")
        .expect("a spec warning");
    assert!(w.text.contains("headroom + rail"), "{}", w.text);
    assert!(!w.text.contains("headroom − rail"), "{}", w.text);
}

/// The spread's charts show every limit that trials fail, failing ones
/// first: the failing + rail (not the passing − rail) and the settling.
#[test]
fn the_spread_shows_every_failing_limit_first() {
    let mut s = near_the_plus_rail();
    let settle = analyze(&s).step.settle_s[1].unwrap();
    if let Some(spec) = s.spec.as_mut() {
        spec.settle_max_s = Some(0.5 * settle);
    }
    let r = loopwright::study::spread::spread(
        &s,
        &loopwright::study::spread::Run {
            trials: Some(40),
            ..Default::default()
        },
    );
    let keys = loopwright::study::spread::shown_figures(&r, 4);
    assert_eq!(
        &keys[..2],
        &["headroom_high_v", "settle_01pct_s"],
        "{keys:?}"
    );
    assert!(!keys.contains(&"headroom_low_v"), "{keys:?}");
    // The SVG draws those panels, named, failing first.
    s.spread = Some(loopwright::model::scenario::Spread {
        trials: Some(40),
        ..Default::default()
    });
    let e = evaluate(&s);
    let stage = [loopwright::output::svg::Evaluated {
        scenario: &s,
        eval: &e,
    }];
    let view = loopwright::output::views::ViewId::Spread.view();
    let svg = loopwright::output::svg::render(view, &stage, Default::default()).unwrap();
    let at = |label: &str| {
        svg.find(label)
            .unwrap_or_else(|| panic!("{label} in\n{svg}"))
    };
    assert!(at("headroom + rail") < at("settling to 0.1 %"));
    assert!(!svg.contains("headroom − rail"));
}

/// A gain-11 stage with 1 µF across 1 MΩ on a GHz amplifier: a 1 s
/// pole–zero tail behind poles a billion times faster. With an ideal
/// amplifier H = 1 + rf/(rg·(1 + s·rf·cf)), so y/final − 1 =
/// −(rf/rg)/G·e^{−t/τ}, τ = rf·cf (first-order algebra), and settling to
/// ε takes τ·ln((rf/rg)/G/ε). The waveform must follow it down to 1 ppm.
#[test]
fn a_slow_tail_settles_to_one_ppm_as_the_closed_form_says() {
    let mut s = plain(Topology::NonInverting, 100e3, 1e6);
    s.amp.a0 = 1e7;
    s.amp.gbw = 1e9;
    s.stage.cf = Some(1e-6);
    let r = analyze(&s).step;
    let (tau, g): (f64, f64) = (1.0, 11.0);
    for eps in [1e-2, 1e-3, 1e-4, 1e-5, 1e-6] {
        let want = tau * (10.0 / g / eps).ln();
        let got = r.settle_to(eps).expect("resolved down to 1 ppm");
        // Within 1e-3·τ: the crossing of a band ε is then placed to 0.1 %
        // of the band (the slope there is ε/τ).
        assert!(
            (got - want).abs() < 1e-3 * tau,
            "ε {eps}: settled at {got} s, closed form {want} s"
        );
    }
    // The figures agree with the same reading.
    assert_eq!(r.settle_s[2], r.settle_to(1e-4));
    // Below the bound the method states, no figure.
    const { assert!(loopwright::engine::step::SETTLE_FLOOR <= 1e-6) };
    assert_eq!(
        r.settle_to(loopwright::engine::step::SETTLE_FLOOR / 2.0),
        None
    );
}

/// The workbench's step view says why a stage held at a rail has no
/// figures.
#[test]
fn the_workbench_step_view_names_the_rail_held_before_the_step() {
    use crate::support::keys::{key, screen_at};
    use crossterm::event::KeyCode;
    use loopwright::output::views::ViewId;
    use loopwright::ui::app::App;
    use loopwright::ui::theme::Theme;
    let mut a = App::new(vec![(clipped_at_dc(), None)], Theme::new(false, false));
    for _ in 0..ViewId::ALL.len() {
        if a.view == ViewId::Step {
            break;
        }
        a.on_key(key(KeyCode::Char('v')));
    }
    assert_eq!(a.view, ViewId::Step);
    let screen = screen_at(&a, 160, 48);
    assert!(
        screen.contains("no figures: held at the + rail before the step"),
        "{screen}"
    );
}

/// The two qualifiers show in the pane only beside what they qualify (or
/// when given), so a stage without swing or bias figures lists as before.
#[test]
fn the_qualifiers_show_beside_what_they_qualify() {
    use loopwright::ui::app::App;
    use loopwright::ui::theme::Theme;
    let shown = |s: &Scenario| -> Vec<&str> {
        let a = App::new(vec![(s.clone(), None)], Theme::new(false, false));
        a.visible().iter().map(|p| p.path).collect()
    };
    let mut s = in_range(plain(Topology::NonInverting, 1e3, 1e3));
    let none = shown(&s);
    assert!(!none.contains(&"amp.swing_load") && !none.contains(&"amp.ib_doubling"));
    s.amp.swing_pos = Some(0.1);
    s.amp.ios = Some(1e-9);
    let both = shown(&s);
    assert!(both.contains(&"amp.swing_load") && both.contains(&"amp.ib_doubling"));
    let mut given = in_range(plain(Topology::NonInverting, 1e3, 1e3));
    given.amp.swing_load = Some(1e3);
    assert!(shown(&given).contains(&"amp.swing_load"));
}
