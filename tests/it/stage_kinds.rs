//! Stage kinds as data: the registry, the kind's parts in the pane and the
//! netlist, and the spread's corners beyond 2^10.

use crate::support::closed_forms::assert_rel;
use crate::support::stages::{follower, in_range, plain};

use loopwright::engine::analysis::analyze;
use loopwright::engine::circuit::Circuit;
use loopwright::judge::evaluate;
use loopwright::judge::warning::Code;
use loopwright::model::scenario::{Feedback, Load, Scenario};
use loopwright::model::values::fmt_eng;
use loopwright::model::Series;
use loopwright::output::report::point_report;
use loopwright::study::stabilize::{self, Part};

use loopwright::model::params::{param, set_topology};
use loopwright::model::scenario::Spread;
use loopwright::model::stages::{kind, KINDS};
use loopwright::model::Topology;
use loopwright::study::spread::{corner_knobs, knobs};

/// Every topology a file can name has exactly one kind, in the same order.
#[test]
fn every_topology_has_its_kind() {
    assert_eq!(KINDS.len(), Topology::ALL.len());
    for (k, t) in KINDS.iter().zip(Topology::ALL) {
        assert_eq!(k.topology, t);
        assert_eq!(kind(t).topology, t);
    }
}

/// The pane shows the parts a kind declares: a follower has no rg
/// (common practice: a unity-gain buffer is the + input and a wire).
#[test]
fn the_pane_shows_the_kinds_parts() {
    let rg = param("stage.rg").unwrap();
    let s = plain(Topology::Inverting, 1.0e3, 10.0e3);
    assert!(rg.applies(&s));
    let mut f = s.clone();
    set_topology(&mut f, Topology::Follower);
    assert!(!rg.applies(&f));
}

/// Switching kind keeps the values of the parts both kinds have.
#[test]
fn switching_kind_keeps_shared_parts() {
    let mut s = plain(Topology::NonInverting, 2.2e3, 47.0e3);
    s.stage.riso = Some(33.0);
    set_topology(&mut s, Topology::Inverting);
    assert_eq!(s.stage.rg, Some(2.2e3));
    assert_eq!(s.stage.rf, Some(47.0e3));
    assert_eq!(s.stage.riso, Some(33.0));
    assert_eq!(s.nominal_gain(), -47.0e3 / 2.2e3); // textbook: −rf/rg
}

/// Beyond the corner limit the corners keep the parts with the largest
/// first-order effect on the gain. Textbook: the non-inverting gain
/// 1 + rf/rg depends on rg and rf alone at DC, apart from the loop gain's
/// 1/a0 share; riso with no load and ro carry no DC current, so with a
/// limit of 2 the corners must keep rg and rf.
#[test]
fn corners_beyond_the_limit_keep_the_largest_effects() {
    let mut s = in_range(plain(Topology::NonInverting, 1.0e3, 10.0e3));
    s.load.r = None;
    s.load.c = None;
    s.stage.riso = Some(47.0);
    s.stage.tolerance = 0.01;
    s.spread = Some(Spread {
        gbw_tol: Some(0.3),
        ro_tol: Some(0.3),
        ..Spread::default()
    });
    let k = knobs(&s);
    let fields: Vec<&str> = k.iter().map(|k| k.field).collect();
    assert!(fields.len() >= 4, "{fields:?}");
    let kept: Vec<&str> = corner_knobs(&s, &k, 2)
        .iter()
        .map(|&i| k[i].field)
        .collect();
    assert_eq!(kept, ["stage.rg", "stage.rf"]);
    // Within the limit every knob is a corner.
    assert_eq!(corner_knobs(&s, &k, 10).len(), k.len());
}

/// The cable driver of the issue: non-inverting, rg 1 kΩ, rf 10 kΩ, riso
/// 50 Ω into 1 kΩ ∥ 1 nF, a0 1e6.
fn cable_driver(feedback: Feedback) -> Scenario {
    let mut s = in_range(plain(Topology::NonInverting, 1.0e3, 10.0e3));
    s.amp.a0 = 1.0e6;
    s.stage.riso = Some(50.0);
    s.stage.feedback = feedback;
    s.load = Load {
        r: Some(1.0e3),
        c: Some(1.0e-9),
        sample: None,
    };
    s
}

/// Feedback at the load (common practice for a cable driver): the loop
/// holds the load terminal at 1 + rf/rg = 11 to within 1/loop gain; at
/// the pin riso and the load divide the loop's 11: 11·1000/1050 = 10.476
/// (textbook voltage divider).
#[test]
fn feedback_at_the_load_keeps_the_dc_gain() {
    let g = 1.0 + 10.0e3 / 1.0e3; // textbook: 1 + rf/rg
    let load = analyze(&cable_driver(Feedback::Load));
    let tol = 2.0 / load.dc.loop_gain.norm();
    assert!(tol < 1e-3, "loop gain too low for the check: {tol}");
    assert_rel("dc gain, feedback at the load", load.dc_gain, g, tol);
    let pin = analyze(&cable_driver(Feedback::Pin));
    let tol = 2.0 / pin.dc.loop_gain.norm();
    assert_rel(
        "dc gain, feedback at the pin",
        pin.dc_gain,
        g * 1000.0 / 1050.0,
        tol,
    );
}

/// With the feedback at the load, taking riso out opens the loop: the pin
/// impedance is null; at the pin it is a number.
#[test]
fn zout_pin_is_null_with_the_feedback_at_the_load() {
    for (fb, given) in [(Feedback::Pin, true), (Feedback::Load, false)] {
        let s = cable_driver(fb);
        let a = analyze(&s);
        let p = point_report(&Circuit::new(&s), &a, 1.0e3);
        assert_eq!(p.zout_pin_mag.is_some(), given, "{fb:?}");
    }
}

/// heavy-output-load with the feedback at the load (the cable driver into
/// 200 Ω): the output pin drives riso into (rf + rg) ∥ load = 50 + 11k ∥
/// 200 = 246.4 Ω (series and parallel resistors, textbook), not
/// (rf + rg) ∥ (riso + load) = 243.4 Ω.
#[test]
fn heavy_output_load_sees_the_network_driven() {
    let mut s = cable_driver(Feedback::Load);
    s.load.r = Some(200.0);
    let e = evaluate(&s);
    let w = e
        .warnings
        .iter()
        .find(|w| w.code == Code::HeavyOutputLoad)
        .expect("heavy-output-load");
    let seen = 50.0 + 1.0 / (1.0 / 11.0e3 + 1.0 / 200.0);
    assert!(
        w.text.contains(&fmt_eng(seen, "Ω")),
        "{} should name {}",
        w.text,
        fmt_eng(seen, "Ω")
    );
    assert!(w.text.contains("riso"), "{}", w.text);
}

/// `stabilize` lists the in-loop option beside riso and cf: cf with the
/// feedback taken after the stage's riso, the smallest E12 value (IEC
/// 60063) whose margin reaches the target (the next E12 value down does
/// not), and it carries the load feedback when picked.
#[test]
fn stabilize_lists_the_in_loop_option() {
    let s = cable_driver(Feedback::Pin);
    let o = stabilize::options(&s, 60.0).unwrap();
    let parts: Vec<Part> = o.options.iter().map(|f| f.part).collect();
    assert!(parts.contains(&Part::CfAtLoad), "{parts:?}");
    let fix = o.options.iter().find(|f| f.part == Part::CfAtLoad).unwrap();
    let with = Part::CfAtLoad.applied(&s, fix.value);
    assert_eq!(with.stage.feedback, Feedback::Load);
    assert_eq!(with.stage.riso, Some(50.0));
    assert!(stabilize::meets(&analyze(&with), 60.0));
    let below = Series::E12.next_below(fix.value);
    if below >= stabilize::CF_RANGE.0 {
        let b = Part::CfAtLoad.applied(&s, below);
        assert!(!stabilize::meets(&analyze(&b), 60.0), "{below} also meets");
    }
    // Already at the load: nothing to move.
    let at_load = cable_driver(Feedback::Load);
    assert!(!stabilize::parts_for(&at_load).contains(&Part::CfAtLoad));
}

/// `stage.feedback` from a file: `Load` is read, absent is `Pin` and a
/// saved stage at the pin leaves the field out; a wrong value is refused
/// naming the field, line and column.
#[test]
fn feedback_from_a_file() {
    let text = std::fs::read_to_string("scenarios/line_driver_cable.ron").unwrap();
    let s = Scenario::from_ron(&text, None).unwrap();
    assert_eq!(s.stage.feedback, Feedback::Pin);
    assert!(!s.to_ron().contains("feedback"));
    let with = text.replace("riso: 47.0,", "riso: 47.0, feedback: Load,");
    let t = Scenario::from_ron(&with, None).unwrap();
    assert_eq!(t.stage.feedback, Feedback::Load);
    assert!(t.to_ron().contains("feedback: Load"));
    let bad = text.replace("riso: 47.0,", "riso: 47.0, feedback: After,");
    let err = Scenario::from_ron(&bad, Some("f.ron"))
        .unwrap_err()
        .to_string();
    let line = bad.lines().position(|l| l.contains("After")).unwrap() + 1;
    assert!(err.contains("stage.feedback"), "{err}");
    assert!(err.contains(&format!("f.ron:{line}:")), "{err}");
}

/// A follower with the feedback at the load has its − input at the load
/// terminal: the load sits at the input (gain 1 within 1/loop gain); at
/// the pin riso and the load divide it, 1000/1050 (textbook divider).
#[test]
fn a_follower_with_the_feedback_at_the_load() {
    for (fb, want) in [(Feedback::Load, 1.0), (Feedback::Pin, 1000.0 / 1050.0)] {
        let mut s = in_range(follower());
        s.amp.a0 = 1.0e6;
        s.stage.riso = Some(50.0);
        s.stage.feedback = fb;
        s.load.r = Some(1.0e3);
        let a = analyze(&s);
        let tol = 2.0 / a.dc.loop_gain.norm();
        assert_rel(&format!("follower dc gain, {fb:?}"), a.dc_gain, want, tol);
    }
}
