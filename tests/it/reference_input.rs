//! The reference input (`reference: (v, r, c)`): the node the ground side
//! of the stage returns to, a DC level behind a Thevenin resistance.

use crate::support::closed_forms::assert_rel;
use crate::support::stages::{fast, in_range, plain};
use loopwright::engine::analyze;
use loopwright::model::scenario::{Reference, Supply};
use loopwright::model::{Scenario, Topology};

fn reference(v: f64, r: f64, c: Option<f64>) -> Option<Reference> {
    Some(Reference { v, r, c })
}

/// An inverting stage around a near-ideal amplifier (a0 = 1e9).
fn inverting(rg: f64, rf: f64) -> Scenario {
    fast(plain(Topology::Inverting, rg, rf))
}

#[test]
fn an_inverting_stage_idles_at_the_reference() {
    // Textbook inverting stage with a reference at its + input (common
    // practice): V_out = V_ref·(1 + rf/rg) − V_in·rf/rg at DC with an
    // ideal amplifier.
    let (rg, rf) = (10e3, 47e3);
    for (v_ref, v_in) in [(1.65, 0.5), (2.5, -0.3), (-1.0, 0.0)] {
        let mut s = inverting(rg, rf);
        s.reference = reference(v_ref, 0.0, None);
        s.source.dc = Some(v_in);
        let a = analyze(&s);
        let want = v_ref * (1.0 + rf / rg) - v_in * rf / rg;
        let got = a.limits.out_dc_v.expect("a DC level");
        assert_rel(
            &format!("out at v_ref {v_ref}, v_in {v_in}"),
            got,
            want,
            1e-7,
        );
    }
}

#[test]
fn gain_minus_4_7_on_3v3_sits_at_mid_rail() {
    // Inverting −4.7 on 0–3.3 V, v = 1.65 V, source.dc = 1.65 V: the
    // output and the + pin sit at 1.65 V (the formula above:
    // 1.65·5.7 − 1.65·4.7).
    let mut s = inverting(10e3, 47e3);
    s.reference = reference(1.65, 0.0, None);
    s.source.dc = Some(1.65);
    s.supply = Some(Supply {
        neg: 0.0,
        pos: 3.3,
        ..Supply::default()
    });
    s.amp.cm_neg = Some(-0.1);
    let a = analyze(&s);
    assert_rel("output", a.limits.out_dc_v.unwrap(), 1.65, 1e-7);
    let d = a.limits.dc_only.expect("a supply, no peak");
    assert_rel("+ pin low", d.cm_low_v.unwrap(), 1.65, 1e-12);
    assert_rel("+ pin high", d.cm_high_v.unwrap(), 1.65, 1e-12);
    // Headroom to the 0 V and 3.3 V rails from 1.65 V (no swing limits).
    assert_rel("headroom −", d.headroom_low_v.unwrap(), 1.65, 1e-6);
    assert_rel("headroom +", d.headroom_high_v.unwrap(), 1.65, 1e-6);
    // The step starts there, inside the rails; the same stage with its +
    // input grounded starts at −1.65·4.7 V, past the 0 V rail.
    assert_eq!(a.step.reason, None);
    s.reference = None;
    assert!(
        analyze(&s).step.reason.is_some(),
        "grounded: held at a rail"
    );
}

#[test]
fn the_reference_resistance_adds_to_rg_at_dc() {
    // Non-inverting, rg to a reference with r = 1 kΩ: at DC r is in series
    // with rg, so the ideal gain is 1 + rf/(rg + r) (textbook voltage
    // divider); with the bypass capacitor the band gain is 1 + rf/rg.
    let (rg, rf, r) = (1e3, 10e3, 1e3);
    let mut s = fast(plain(Topology::NonInverting, rg, rf));
    s.reference = reference(0.0, r, None);
    assert_rel(
        "ideal gain",
        analyze(&s).ideal_gain,
        1.0 + rf / (rg + r),
        1e-12,
    );
    s.reference = reference(0.0, r, Some(1.0e-3));
    let a = analyze(&s);
    assert_rel(
        "ideal gain with c",
        a.ideal_gain,
        1.0 + rf / (rg + r),
        1e-12,
    );
    // 1 mF against 1 kΩ: 1/(2π·1 ms) ≈ 0.16 Hz; at 10 kHz the capacitor's
    // 16 mΩ leaves r out (gain 11 within its share, 16e-3/1e3).
    let p = analyze(&s);
    let at = p
        .sweep
        .points
        .iter()
        .find(|q| q.f_hz >= 1e4)
        .expect("a 10 kHz point");
    assert_rel("band gain", at.gain.norm(), 1.0 + rf / rg, 1e-4);
}

#[test]
fn the_reference_resistance_carries_its_thermal_noise() {
    // An inverting stage whose + input sits on a reference r: its Johnson
    // noise (4kTr, SI 2019 k) appears at the output × the noise gain
    // 1 + rf/rg (textbook: a voltage in series with the + input).
    let (rg, rf, r) = (1e3, 9e3, 10e3);
    let mut s = inverting(rg, rf);
    s.reference = reference(1.0, r, None);
    let c = loopwright::engine::Circuit::new(&s);
    let k = c
        .net
        .noise
        .iter()
        .position(|n| n.key == "reference_r")
        .expect("a reference_r noise source");
    let p = c.eval(1e3).expect("regular");
    let want = crate::support::closed_forms::johnson(r, s.temp_c) * (1.0 + rf / rg);
    assert_rel("reference r noise", p.noise_psd[k].sqrt(), want, 1e-6);
}

#[test]
fn the_bias_balance_counts_the_reference_resistance() {
    // Equal bias currents cancel when both pins see the same resistance
    // (textbook): the + pin's total, reference r included, is rg ∥ rf.
    let (rg, rf) = (10e3, 100e3);
    let want = rg * rf / (rg + rf);
    for r in [0.0, 2e3, 20e3] {
        let mut s = inverting(rg, rf);
        s.amp.ib = Some(100e-9);
        s.reference = reference(1.0, r, None);
        let got = analyze(&s).limits.bias_balance_ohm.expect("a balance");
        assert_rel(&format!("total at reference r {r}"), got, want, 1e-6);
    }
}

#[test]
fn a_reference_is_refused_where_it_has_no_place() {
    let problem = |s: &Scenario| {
        s.validate()
            .expect_err("refused")
            .into_iter()
            .map(|p| format!("{}: {}", p.field, p.message))
            .collect::<Vec<_>>()
            .join("; ")
    };
    let mut f = in_range(plain(Topology::Follower, 1.0, 0.0));
    f.stage.rg = None;
    f.stage.rf = None;
    f.reference = reference(1.0, 0.0, None);
    let text = problem(&f);
    assert!(
        text.contains("reference.v") && text.contains("no reference input"),
        "{text}"
    );
    let mut s = in_range(plain(Topology::Inverting, 1e3, 10e3));
    s.reference = reference(1.0, 0.0, Some(1e-6));
    let text = problem(&s);
    assert!(
        text.contains("reference.c") && text.contains("does nothing"),
        "{text}"
    );
    s.reference = reference(150.0, 1e3, None);
    assert!(problem(&s).contains("reference.v"));
    s.reference = reference(1.0, 2e9, None);
    assert!(problem(&s).contains("reference.r"));
}

#[test]
fn a_bad_reference_value_names_its_line_and_column() {
    let text = "(\n    title: \"t\",\n    stage: (topology: Inverting, rg: 1000.0, rf: 10000.0, series: E24, tolerance: 0.01),\n    \
                amp: (a0: 100000.0, gbw: 1.0e6, ro: 50.0, vnoise: 1.0e-8, inoise: 1.0e-12),\n    \
                source: (r: 0.0),\n    load: (),\n    reference: (v: 1.65, r: -5.0),\n    \
                temp_c: 25.0,\n    band: (10.0, 1000.0),\n)\n";
    let e = Scenario::from_ron(text, Some("r.ron")).expect_err("negative r");
    assert_eq!(e.field.as_deref(), Some("reference.r"), "{e}");
    assert_eq!(e.line, Some(7), "{e}");
    assert!(e.col.is_some(), "{e}");
    // Without the block the same stage loads, its + input grounded.
    let ok = text.replace("    reference: (v: 1.65, r: -5.0),\n", "");
    let s = Scenario::from_ron(&ok, None).expect("loads");
    assert_eq!(s.reference, None);
}

#[test]
fn the_mid_rail_inverter_works() {
    // scenarios/single_supply_inverter_mid_rail.ron: −4.7 on 0…3.3 V, the
    // reference and the signal at 1.65 V: the output idles at 1.65 V
    // (the formula above) give or take its offset, and a 0.25 V peak
    // (±1.175 V at the output) stays inside the rails and the inputs' range.
    let path = std::path::Path::new("scenarios/single_supply_inverter_mid_rail.ron");
    let s = Scenario::load(path).expect("loads");
    let e = loopwright::judge::evaluate(&s);
    let l = &e.analysis.limits;
    let offset = l.out_offset_max_v.expect("offset inputs given");
    let out = l.out_dc_v.expect("a DC level");
    assert!(
        (out - 1.65).abs() <= offset,
        "{out} V, offset bound {offset} V"
    );
    assert!(l.headroom_low_v.unwrap() > 0.0 && l.headroom_high_v.unwrap() > 0.0);
    assert!(l.cm_headroom_v.unwrap() > 0.0);
    assert!(
        e.warnings
            .iter()
            .all(|w| w.severity == loopwright::judge::Severity::Info),
        "{:?}",
        e.warnings
    );
}

#[test]
fn the_json_report_echoes_the_reference() {
    let path = "scenarios/single_supply_inverter_mid_rail.ron";
    let out = crate::support::cli::stdout_of(&["report", "--json", path]);
    let v: serde_json::Value = serde_json::from_str(&out).expect("JSON");
    // The file's own values (scenarios/single_supply_inverter_mid_rail.ron).
    assert_eq!(v["reference"]["v"], 1.65);
    assert_eq!(v["reference"]["r"], 5000.0);
    assert_eq!(v["reference"]["c"], 10.0e-6);
    // The DC level at the load: mid-rail (the formula above) within the
    // offset bound.
    let dc = v["out_dc_v"].as_f64().expect("a DC level");
    let bound = v["out_offset_max_v"].as_f64().expect("offset inputs");
    assert!((dc - 1.65).abs() <= bound, "{dc}");
    let demo = crate::support::cli::stdout_of(&["report", "--json"]);
    assert!(!demo.contains("\"reference\""), "no block, no echo");
}

/// A reference input can be added from the pane: its level is offered
/// (as "none") on every kind that has one, typing a level adds the block,
/// and its resistance and bypass capacitor follow; a follower has none.
#[test]
fn the_pane_adds_a_reference_to_a_stage_without_one() {
    use crate::support::keys::{key, type_text};
    use crossterm::event::KeyCode;
    use loopwright::model::params::param;
    use loopwright::ui::app::App;
    use loopwright::ui::theme::Theme;
    let s = in_range(plain(Topology::Inverting, 10e3, 47e3));
    assert!(s.reference.is_none());
    let mut a = App::new(vec![(s, None)], Theme::new(false, false));
    let paths = |a: &App| a.visible().iter().map(|p| p.path).collect::<Vec<_>>();
    assert!(paths(&a).contains(&"reference.v"), "{:?}", paths(&a));
    assert!(!paths(&a).contains(&"reference.r"));
    a.selected = param("reference.v").unwrap();
    a.on_key(key(KeyCode::Enter));
    for _ in 0..20 {
        a.on_key(key(KeyCode::Backspace));
    }
    type_text(&mut a, "1.65");
    a.on_key(key(KeyCode::Enter));
    assert_eq!(
        a.slot().scenario.reference.map(|r| (r.v, r.r)),
        Some((1.65, 0.0)),
        "{}",
        a.status
    );
    assert!(paths(&a).contains(&"reference.r"), "{:?}", paths(&a));
    // A follower returns nothing to ground: no reference row.
    let f = App::new(
        vec![(in_range(crate::support::stages::follower()), None)],
        Theme::new(false, false),
    );
    assert!(!paths(&f).contains(&"reference.v"));
}
