//! DC errors and signal limits against closed forms of the stage: the
//! textbook DC-error expression, full-power bandwidth, the current into a
//! capacitor, voltage dividers. Sources are named beside each check value.

use crate::support::closed_forms::assert_rel;
use crate::support::stages::{self, in_range};

use loopwright::model::scenario::{Scenario, Supply};

/// The shared test stages with ro inside its accepted range (10 mΩ): the
/// current through ro is read as a voltage difference over ro, which a
/// 1 µΩ ro would drown in rounding.
fn plain(t: Topology, rg: f64, rf: f64) -> Scenario {
    in_range(stages::plain(t, rg, rf))
}

fn follower() -> Scenario {
    in_range(stages::follower())
}
use loopwright::judge::evaluate;
use loopwright::judge::Evaluation;
use loopwright::judge::Severity;
use loopwright::model::Topology;
use std::f64::consts::PI;

fn par(a: f64, b: f64) -> f64 {
    a * b / (a + b)
}

/// A near-ideal amplifier (a0 = 1e9) so the exact figures meet the
/// textbook's ideal-amplifier forms.
fn ideal_amp(mut s: Scenario) -> Scenario {
    s.amp.a0 = 1.0e9;
    s.amp.gbw = 1.0e9;
    s
}

fn codes(e: &Evaluation) -> Vec<(&'static str, Severity)> {
    e.warnings
        .iter()
        .map(|w| (w.code.as_str(), w.severity))
        .collect()
}

fn has(e: &Evaluation, code: &str) -> Option<Severity> {
    e.warnings
        .iter()
        .find(|w| w.code == code)
        .map(|w| w.severity)
}

#[test]
fn non_inverting_dc_error_meets_the_textbook_expression() {
    // Textbook, bias currents flowing into the pins:
    // Vout = (1 + rf/rg)·(vos − ib+·rs) + ib−·rf.
    let (rg, rf, rs) = (1.0e3, 10.0e3, 2.0e3);
    let g = 1.0 + rf / rg;
    let mut s = ideal_amp(plain(Topology::NonInverting, rg, rf));
    s.source.r = Some(rs);
    s.amp.ib = Some(100.0e-9);
    let ib = 100.0e-9;
    let e = evaluate(&s);
    let want = g * (-ib * rs) + ib * rf;
    assert_rel(
        "bias error",
        e.analysis.limits.out_bias_v.unwrap(),
        want,
        1e-6,
    );
    // With only the offset voltage: (1 + rf/rg)·vos (same expression).
    let mut v = s.clone();
    v.amp.ib = None;
    v.amp.vos = Some(1.0e-3);
    assert_rel(
        "offset",
        evaluate(&v).analysis.limits.out_offset_max_v.unwrap(),
        g * 1.0e-3,
        1e-6,
    );
    // Drift: vos + drift·|T − 25 °C| (the field's definition), at 75 °C.
    v.amp.vos_drift = Some(10.0e-6);
    v.temp_c = 75.0;
    assert_rel(
        "offset with drift",
        evaluate(&v).analysis.limits.out_offset_max_v.unwrap(),
        g * (1.0e-3 + 10.0e-6 * 50.0),
        1e-6,
    );
    // Offset current: ib+ and ib− apart by ios, either way round, in the
    // same expression: worst case (ios/2)·((1 + rf/rg)·rs + rf).
    let mut c = s.clone();
    c.amp.ib = None;
    c.amp.ios = Some(20.0e-9);
    assert_rel(
        "offset current",
        evaluate(&c).analysis.limits.out_offset_max_v.unwrap(),
        10.0e-9 * (g * rs + rf),
        1e-6,
    );
    // The exact figure approaches the expression as a0 grows.
    let err = |a0: f64| {
        let mut t = s.clone();
        t.amp.a0 = a0;
        ((evaluate(&t).analysis.limits.out_bias_v.unwrap() - want) / want).abs()
    };
    assert!(
        err(1.0e3) > 10.0 * err(1.0e6),
        "{} {}",
        err(1.0e3),
        err(1.0e6)
    );
    // DC at the load: dc_gain·source.dc + the bias error (the definition).
    let mut d = s.clone();
    d.source.dc = Some(0.25);
    let ed = evaluate(&d);
    assert_rel(
        "out dc",
        ed.analysis.limits.out_dc_v.unwrap(),
        ed.analysis.dc_gain * 0.25 + want,
        1e-9,
    );
}

#[test]
fn bias_currents_cancel_with_rs_equal_to_rg_parallel_rf() {
    // Textbook: with rs = rg‖rf the two bias terms of
    // Vout = −(1 + rf/rg)·ib·rs + ib·rf cancel.
    let (rg, rf) = (1.0e3, 10.0e3);
    let ib = 100.0e-9;
    let mut s = ideal_amp(plain(Topology::NonInverting, rg, rf));
    s.source.r = Some(par(rg, rf));
    s.amp.ib = Some(ib);
    let bias = evaluate(&s).analysis.limits.out_bias_v.unwrap();
    assert!(bias.abs() < 1e-6 * ib * rf, "{bias}");
    // From an ideal source the balance resistor is rg‖rf itself; from
    // 100 Ω, rg‖rf − 100 Ω (same cancellation).
    s.source.r = Some(0.0);
    let r = evaluate(&s).analysis.limits.bias_balance_ohm.unwrap();
    assert_rel("balance from 0 Ω", r, par(rg, rf), 1e-6);
    s.source.r = Some(100.0);
    let r = evaluate(&s).analysis.limits.bias_balance_ohm.unwrap();
    assert_rel("balance from 100 Ω", r, par(rg, rf) - 100.0, 1e-6);
    // Already balanced or over: no positive resistor (null).
    s.source.r = Some(2.0 * par(rg, rf));
    assert_eq!(evaluate(&s).analysis.limits.bias_balance_ohm, None);
    s.amp.ib = None;
    assert_eq!(evaluate(&s).analysis.limits.bias_balance_ohm, None);
}

#[test]
fn inverting_stage_balances_with_rs_plus_rg_parallel_rf() {
    // Textbook: the − input sees (rs + rg)‖rf, so a resistor of that value
    // from the + pin to ground cancels equal bias currents.
    let (rg, rf, rs) = (1.0e3, 10.0e3, 50.0);
    let mut s = ideal_amp(plain(Topology::Inverting, rg, rf));
    s.source.r = Some(rs);
    s.amp.ib = Some(50.0e-9);
    let e = evaluate(&s);
    assert_rel(
        "balance",
        e.analysis.limits.bias_balance_ohm.unwrap(),
        par(rs + rg, rf),
        1e-6,
    );
    // Without it the − pin's current flows through rf: Vout = ib·rf.
    assert_rel(
        "bias error",
        e.analysis.limits.out_bias_v.unwrap(),
        50.0e-9 * rf,
        1e-6,
    );
    // The + input is grounded: its range is 0 to 0 (the definition).
    s.source.peak = Some(0.1);
    let e = evaluate(&s);
    assert_eq!(
        (e.analysis.limits.cm_low_v, e.analysis.limits.cm_high_v),
        (Some(0.0), Some(0.0))
    );
}

#[test]
fn full_power_bandwidth_and_slew_need() {
    // The usual definitions for a sine of peak Vp at f: slope 2πf·Vp;
    // full-power bandwidth FPBW = SR/(2π·Vp). A fast follower with no load
    // passes the signal at gain 1 across the band.
    let mut s = ideal_amp(follower());
    s.band = (10.0, 20.0e3);
    s.source.peak = Some(2.0);
    s.amp.slew = Some(1.0e6);
    let e = evaluate(&s);
    let l = &e.analysis.limits;
    assert_rel("int peak", l.int_peak_v.unwrap(), 2.0, 1e-6);
    assert_rel(
        "slew need",
        l.slew_needed_v_per_s.unwrap(),
        2.0 * PI * 20.0e3 * 2.0,
        1e-6,
    );
    assert_rel("fpbw", l.fpbw_hz.unwrap(), 1.0e6 / (2.0 * PI * 2.0), 1e-6);
    // 251 kV/s of 1 MV/s: no slew warning; at 300 kV/s (84 %) a warning
    // (README threshold 70 %), at 200 kV/s severe.
    assert_eq!(has(&e, "slew"), None, "{:?}", codes(&e));
    s.amp.slew = Some(300.0e3);
    assert_eq!(has(&evaluate(&s), "slew"), Some(Severity::Warning));
    s.amp.slew = Some(200.0e3);
    assert_eq!(has(&evaluate(&s), "slew"), Some(Severity::Severe));
    s.amp.slew = None;
    assert_eq!(evaluate(&s).analysis.limits.fpbw_hz, None);
}

#[test]
fn capacitive_load_current_is_two_pi_f_c_vp() {
    // Current into a capacitor driven by a sine of peak Vp: |I| = 2πf·C·Vp,
    // largest at the band's top edge.
    let mut s = ideal_amp(follower());
    s.band = (10.0, 10.0e3);
    s.load.c = Some(10.0e-9);
    s.source.peak = Some(1.0);
    let e = evaluate(&s);
    let want = 2.0 * PI * 10.0e3 * 10.0e-9 * 1.0;
    assert_rel("iout", e.analysis.limits.iout_peak_a.unwrap(), want, 1e-4);
    // Above 80 % of the limit a warning naming the load capacitance and
    // the frequency; above the limit severe (README thresholds).
    s.amp.iout = Some(want / 0.9);
    let e = evaluate(&s);
    let w = e
        .warnings
        .iter()
        .find(|w| w.code == "output-current")
        .unwrap();
    assert_eq!(w.severity, Severity::Warning);
    assert!(
        w.text.contains("load capacitance") && w.text.contains("10 kHz"),
        "{}",
        w.text
    );
    s.amp.iout = Some(want / 1.1);
    assert_eq!(has(&evaluate(&s), "output-current"), Some(Severity::Severe));
    s.amp.iout = Some(want / 0.7);
    assert_eq!(has(&evaluate(&s), "output-current"), None);
}

#[test]
fn internal_output_swings_more_than_the_load_by_the_ro_and_riso_drops() {
    // Voltage dividers at DC: V(amp) = V(load)·(RL + riso)/RL, and the
    // current through ro is the load's plus the feedback network's, so
    // V(int) = V(load)·(RL + riso + ro)/RL + ro·V(amp)/(rg + rf).
    let (rg, rf, rl, riso, ro) = (1.0e3, 9.0e3, 1.0e3, 100.0, 50.0);
    let mut s = ideal_amp(plain(Topology::NonInverting, rg, rf));
    s.stage.riso = Some(riso);
    s.load.r = Some(rl);
    s.amp.ro = ro;
    s.source.dc = Some(0.5);
    s.source.peak = Some(0.0);
    let e = evaluate(&s);
    let v_load = e.analysis.limits.out_dc_v.unwrap();
    let v_amp = v_load * (rl + riso) / rl;
    let i_fb = v_amp / (rg + rf);
    let want = v_load * (rl + riso + ro) / rl + ro * i_fb;
    assert_rel("int dc", e.analysis.limits.int_dc_v.unwrap(), want, 1e-6);
    // The amplifier's current (peak 0: the DC current alone).
    assert_rel(
        "i dc",
        e.analysis.limits.iout_peak_a.unwrap(),
        v_load / rl + i_fb,
        1e-6,
    );
    // And the gain 1 + rf/rg holds at the amplifier pin (textbook).
    assert_rel("v amp", v_amp, 0.5 * (1.0 + rf / rg), 1e-6);
}

fn example(name: &str) -> Scenario {
    Scenario::load(std::path::Path::new(&format!("scenarios/{name}.ron"))).unwrap()
}

#[test]
fn single_supply_inverter_clips_and_its_grounded_input_is_out_of_range() {
    // scenarios/single_supply_inverter_clips.ron: gain −10 on 0…5 V with
    // a 0.2 V peak; the output must reach about −2 V (gain × peak, from
    // the textbook inverting gain), far below the 0.1 V usable bottom.
    let e = evaluate(&example("single_supply_inverter_clips"));
    let low = e.analysis.limits.headroom_low_v.unwrap();
    assert!(low < -(10.0 * 0.2 * 0.9 - 0.1), "{low}");
    assert_eq!(has(&e, "output-swing"), Some(Severity::Severe));
    let w = e
        .warnings
        .iter()
        .find(|w| w.code == "output-swing")
        .unwrap();
    assert!(
        w.text.contains("negative rail") && w.text.contains("ro"),
        "{}",
        w.text
    );
    // Ground is 0.5 V outside inputs that stop 0.5 V above the negative
    // rail (cm_neg in the file).
    assert_rel(
        "cm headroom",
        e.analysis.limits.cm_headroom_v.unwrap(),
        -0.5,
        1e-9,
    );
    let w = e.warnings.iter().find(|w| w.code == "input-range").unwrap();
    assert_eq!(w.severity, Severity::Severe);
    assert!(w.text.contains("grounded"), "{}", w.text);
}

#[test]
fn rail_to_rail_follower_at_mid_supply_flags_neither() {
    // scenarios/mid_supply_follower_fine.ron: 2.5 V ± 1 V on 0…5 V, gain 1
    // (follower): about 1.5 V of room each side (the definitions).
    let e = evaluate(&example("mid_supply_follower_fine"));
    assert_eq!(has(&e, "output-swing"), None, "{:?}", codes(&e));
    assert_eq!(has(&e, "input-range"), None, "{:?}", codes(&e));
    assert_eq!(e.warnings.len(), 0, "{:?}", codes(&e));
    let l = &e.analysis.limits;
    assert!((l.headroom_low_v.unwrap() - 1.48).abs() < 0.02);
    assert!((l.cm_low_v.unwrap() - 1.5).abs() < 0.01);
    assert!((l.cm_high_v.unwrap() - 3.5).abs() < 0.01);
}

#[test]
fn headroom_warning_below_five_percent_of_the_span() {
    // A follower at 0 V ± 1 V on ±1.05 V rails: 50 mV of room, 2.4 % of
    // the 2.1 V span (README: warning below 5 %); on ±1.2 V, 200 mV, 8 %.
    let mut s = ideal_amp(follower());
    s.source.peak = Some(1.0);
    s.supply = Some(Supply {
        neg: -1.05,
        pos: 1.05,
        ..Default::default()
    });
    assert_eq!(has(&evaluate(&s), "output-swing"), Some(Severity::Warning));
    s.supply = Some(Supply {
        neg: -1.2,
        pos: 1.2,
        ..Default::default()
    });
    assert_eq!(has(&evaluate(&s), "output-swing"), None);
    // Without a supply: no headroom figures (null).
    s.supply = None;
    let e = evaluate(&s);
    assert_eq!(
        (
            e.analysis.limits.headroom_low_v,
            e.analysis.limits.cm_headroom_v
        ),
        (None, None)
    );
}

#[test]
fn dc_offset_warning_names_the_balance_resistor() {
    // Gain 11 (textbook 1 + rf/rg), 10 mV peak: the output peak is 110 mV,
    // so the 1 % line is 1.1 mV. 1 µA of bias through rf = 10 kΩ gives
    // 10 mV (textbook ib·rf), dominated by the bias currents.
    let mut s = ideal_amp(plain(Topology::NonInverting, 1.0e3, 10.0e3));
    s.source.peak = Some(0.01);
    s.amp.ib = Some(1.0e-6);
    let e = evaluate(&s);
    let w = e.warnings.iter().find(|w| w.code == "dc-offset").unwrap();
    assert!(w.text.contains("909"), "{}", w.text);
    // Its advice is a change the stage can hold; the balance resistor,
    // which it cannot, is named as such (issue 24: no advice the tool
    // cannot model).
    assert!(w.text.contains("lower rf and rg"), "{}", w.text);
    assert!(w.text.contains("cannot hold"), "{}", w.text);
    // 50 µV of vos: 550 µV at the output, under 1.1 mV: no warning.
    s.amp.ib = None;
    s.amp.vos = Some(50.0e-6);
    assert_eq!(has(&evaluate(&s), "dc-offset"), None);
    // Without source.peak the rule says nothing.
    s.amp.vos = Some(1.0e-3);
    s.source.peak = None;
    assert_eq!(has(&evaluate(&s), "dc-offset"), None);
}

#[test]
fn dc_offset_warning_with_a_zero_peak_gives_no_share() {
    // A zero peak: offset/0 has no finite share. 1 mV of vos at gain 11
    // (textbook noise gain 1 + rf/rg) is 11 mV at the output, all of it.
    let mut s = ideal_amp(plain(Topology::NonInverting, 1.0e3, 10.0e3));
    s.source.peak = Some(0.0);
    s.amp.vos = Some(1.0e-3);
    let e = evaluate(&s);
    let w = e.warnings.iter().find(|w| w.code == "dc-offset").unwrap();
    assert!(
        !w.text.contains("inf") && !w.text.contains('%'),
        "{}",
        w.text
    );
    assert!(
        w.text.contains("11 mV") && w.text.contains("source.peak is 0"),
        "{}",
        w.text
    );
}

#[test]
fn absent_inputs_give_null_figures_and_no_sections() {
    // A file without the new fields: every new figure null, no new report
    // sections (README).
    let e = evaluate(&plain(Topology::NonInverting, 1.0e3, 10.0e3));
    for f in loopwright::judge::figures::FIGURES
        .iter()
        .filter(|f| f.needs_input)
    {
        assert_eq!(f.json(&e), None, "{}", f.key);
    }
    let s = plain(Topology::NonInverting, 1.0e3, 10.0e3);
    let r = loopwright::output::report::Report::new(&s, &e, &[]);
    let mut text = Vec::new();
    loopwright::output::report::write_text(&r, &s, &e, &mut text).unwrap();
    let text = String::from_utf8(text).unwrap();
    assert!(
        !text.contains("DC errors") && !text.contains("Signal limits"),
        "{text}"
    );
    // Nor an empty parameter line for the new group.
    assert!(!text.contains("supply and signal"), "{text}");
}
