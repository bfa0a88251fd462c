//! Property tests over random valid scenarios: the analysis never panics
//! and never yields NaN or infinity where a number is defined.

use loopwright::judge::evaluate;
use loopwright::model::params::{Access, Presence, Stepping, PARAMS};
use loopwright::model::Scenario;
use loopwright::model::Series;
use loopwright::model::Topology;
use proptest::prelude::*;

/// A value at fraction `u` of a range: log-spaced for positive ranges,
/// linear otherwise (temperature).
fn at(range: (f64, f64), u: f64, linear: bool) -> f64 {
    let (lo, hi) = range;
    let v = if linear || lo <= 0.0 {
        lo + u * (hi - lo)
    } else {
        (lo.ln() + u * (hi.ln() - lo.ln())).exp()
    };
    v.clamp(lo, hi)
}

prop_compose! {
    /// Any scenario the rules accept: every numeric field of the parameter
    /// table anywhere in its whole accepted range (ends included), absent
    /// or zero where that is allowed; the band up to its widest.
    fn scenario()(
        topology in prop_oneof![Just(Topology::NonInverting), Just(Topology::Inverting), Just(Topology::Follower), Just(Topology::Transimpedance)],
        series in 0..7usize,
        picks in prop::collection::vec((0..5u8, prop_oneof![Just(0.0), Just(1.0), 0.0..=1.0f64]), PARAMS.len()),
        band_lo in prop_oneof![Just(0.0), Just(1.0), 0.0..=1.0f64],
        band_decades in prop_oneof![Just(15.0), 0.01..=15.0f64],
    ) -> Scenario {
        let mut s = loopwright::files::load::demo();
        s.title = "random".into();
        s.stage.topology = topology;
        s.stage.series = Series::ALL[series];
        for (p, (kind, u)) in PARAMS.iter().zip(picks) {
            if !matches!(p.access, Access::Number { .. }) || p.path.starts_with("band.") {
                continue;
            }
            // A field of the other kind of input, or a part the kind does
            // not have, is refused: left out.
            if !p.inputs.admit(&s) || loopwright::model::params::foreign_part(p, &s) {
                p.set(&mut s, None);
                continue;
            }
            let absent_ok = matches!(p.presence, Presence::Optional | Presence::ZeroIsAbsent)
                || (p.presence == Presence::FeedbackResistor && topology == Topology::Follower);
            let zero_ok = matches!(p.presence, Presence::ZeroIsAbsent | Presence::ZeroAllowed);
            let v = match kind {
                0 if absent_ok => None,
                1 if zero_ok => Some(0.0),
                _ => Some(at(p.range, u, matches!(p.stepping, Stepping::Linear(_)))),
            };
            p.set(&mut s, v);
        }
        if topology != Topology::Follower && s.stage.rf.is_none() {
            s.stage.rf = Some(10e3);
        }
        // The rails in order, with room for the output and the inputs (the
        // cross-field rules); each end was drawn from its own range.
        if let Some(sup) = s.supply.as_mut() {
            let (a, b) = (sup.neg.min(sup.pos), sup.neg.max(sup.pos));
            (sup.neg, sup.pos) = if b > a { (a, b) } else if a < 500.0 { (a, 500.0) } else { (-500.0, a) };
            let span = sup.pos - sup.neg;
            for f in [&mut s.amp.swing_neg, &mut s.amp.swing_pos, &mut s.amp.cm_neg, &mut s.amp.cm_pos] {
                *f = f.map(|v| v.clamp(-0.2 * span, 0.2 * span));
            }
            s.amp.swing_neg = s.amp.swing_neg.map(|v| v.max(0.0));
            s.amp.swing_pos = s.amp.swing_pos.map(|v| v.max(0.0));
        }
        // The spread's lowest open-loop gain at or below a0, a gain target
        // of the topology's sign (cross-field rules).
        if let Some(b) = s.spread.as_mut() {
            b.a0_min = b.a0_min.map(|v| v.min(s.amp.a0));
        }
        let inverting = s.stage.topology.kind().negative;
        // A gain in V/V is held to the narrower range.
        let top = if s.current_input() { 1e13 } else { 1e9 };
        // The second input's and the common mode's fields only on a kind
        // with two inputs (cross-field rule).
        if !matches!(s.stage.topology.kind().input, loopwright::model::stages::Input::Pair { .. }) {
            (s.source.r_plus, s.source.cm, s.source.cm_peak) = (None, None, None);
            if let Some(x) = s.spec.as_mut() {
                x.cmrr_min_db = None;
            }
        }
        if let Some(x) = s.spec.as_mut() {
            x.gain_target = x.gain_target.map(|g| g.abs().min(top)).map(|g| if inverting { -g } else { g });
            // A supply-rejection limit only where the amplifier gives
            // its figure (cross-field rule).
            if s.amp.psrr_db.is_none() {
                x.supply_rejection_min_db = None;
            }
        }
        // A reference input only where the kind returns to one, and its
        // capacitor only behind a resistance (cross-field rules).
        if !topology.kind().has_reference() {
            s.reference = None;
        }
        if let Some(r) = s.reference.as_mut().filter(|r| r.r == 0.0) {
            r.c = None;
        }
        // The temperature range in order, and a gbw drift that leaves gbw
        // positive over it (cross-field rules).
        if let Some((a, b)) = s.temp_range {
            s.temp_range = Some(if a < b { (a, b) } else if a < 500.0 { (a, 500.0) } else { (-273.15, a) });
        }
        let swing = s.temp_range.map_or(0.0, |(a, b)| (a - s.temp_c).abs().max((b - s.temp_c).abs()));
        s.amp.gbw_tc = s.amp.gbw_tc.map(|k| if swing > 0.0 { k.clamp(-0.8 / swing, 0.8 / swing) } else { k });
        let lo = at((1e-6, 1e12), band_lo, false);
        let hi = (lo * 10f64.powf(band_decades)).min(1e12);
        s.band = if hi > lo { (lo, hi) } else { (1e12 / 10f64.powf(band_decades), 1e12) };
        s
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn analysis_is_finite(s in scenario()) {
        prop_assert!(s.validate().is_ok());
        let a = evaluate(&s);
        for (name, v) in [
            ("ideal_gain", a.analysis.ideal_gain),
            ("dc_gain", a.analysis.dc_gain),
            ("gain_error", a.analysis.gain_error),
            ("peaking_db", a.analysis.peaking_db),
            ("zout_dc_ohm", a.analysis.zout_dc_ohm),
            ("noise_density_1khz", a.analysis.noise_density_1khz),
            ("noise_rms", a.analysis.noise_rms),
            ("loop_gain_dc", a.analysis.loop_gain_dc),
        ] {
            prop_assert!(v.is_finite(), "{} = {}", name, v);
        }
        for v in [a.analysis.f_3db_hz, a.analysis.crossover_hz, a.analysis.phase_margin_deg, a.analysis.gain_margin_db, a.analysis.zin_dc_ohm].into_iter().flatten() {
            prop_assert!(v.is_finite());
        }
        // The amplifier's common-mode error is positive feedback where the
        // pins follow the output together (rin shorting them against a
        // 10 TΩ source): where the differential loop alone is under 1 it
        // can set the sign of Zout, or latch the stage (read unstable).
        let feeble = || {
            let mut bare = s.clone();
            bare.amp.cmrr_db = None;
            loopwright::engine::analyze(&bare).loop_gain_dc.abs() < 1.0
        };
        let cm_rules = s.amp.cmrr_db.is_some() && (a.analysis.unstable() || feeble());
        prop_assert!(a.analysis.zout_dc_ohm > 0.0 || cm_rules, "Zout = {}", a.analysis.zout_dc_ohm);
        // The DC-error and signal-limit figures: finite where defined.
        for f in loopwright::judge::figures::FIGURES.iter().filter(|f| f.needs_input) {
            if let loopwright::judge::figures::Reading::Value(v) = f.read(&a) {
                prop_assert!(v.is_finite(), "{} = {}", f.key, v);
            }
        }
        for e in &a.analysis.limits.envelope {
            prop_assert!(e.need.is_finite() && e.need >= 0.0, "need at {} Hz", e.f_hz);
        }
        prop_assert!(a.analysis.peaking_db >= 0.0);
        for p in &a.analysis.sweep.points {
            prop_assert!(p.gain.re.is_finite() && p.gain.im.is_finite());
            prop_assert!(p.loop_gain.re.is_finite() && p.loop_gain.im.is_finite());
            prop_assert!(p.zout.norm().is_finite() && p.zout.norm() > 0.0, "Zout at {} Hz", p.f_hz);
            prop_assert!(p.noise_density().is_finite());
        }
        let total: f64 = a.analysis.noise_sources.iter().map(|n| n.share).sum();
        prop_assert!(total == 0.0 || (total - 1.0).abs() < 1e-9);
    }

    /// The text and JSON reports of any accepted scenario are written
    /// without a panic and with no NaN in the JSON.
    #[test]
    fn reports_are_written(s in scenario()) {
        let e = evaluate(&s);
        let r = loopwright::output::report::Report::new(&s, &e, &[0.0, 1e3, 1e12]);
        let mut text = Vec::new();
        loopwright::output::report::write_text(&r, &s, &e, &mut text).unwrap();
        prop_assert!(!String::from_utf8(text).unwrap().contains("NaN"));
        let mut json = Vec::new();
        r.write_json(&mut json).unwrap();
        prop_assert!(serde_json::from_slice::<serde_json::Value>(&json).is_ok());
    }

}

proptest! {
    // Each case re-runs the engine on every key press: fewer cases.
    #![proptest_config(ProptestConfig::with_cases(16))]

    /// The workbench refreshes and draws any accepted scenario, and
    /// stepping every field (up on one row, down on the next) keeps it valid.
    #[test]
    fn workbench_steps_any_scenario(s in scenario(), presses in 1..6usize) {
        use loopwright::ui::{app::App, theme::Theme, view};
        use ratatui::crossterm::event::{KeyCode, KeyEvent, KeyModifiers};
        let mut a = App::new(vec![(s, None)], Theme::new(false, false));
        let mut term = ratatui::Terminal::new(ratatui::backend::TestBackend::new(80, 24)).unwrap();
        let press = |a: &mut App, c| a.on_key(KeyEvent::new(c, KeyModifiers::NONE));
        for row in 0..PARAMS.len() {
            for _ in 0..presses {
                press(&mut a, if row % 2 == 0 { KeyCode::Right } else { KeyCode::Left });
            }
            prop_assert!(a.slot().scenario.validate().is_ok());
            term.draw(|f| view::draw(f, &a)).unwrap();
            press(&mut a, KeyCode::Down);
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn saving_round_trips(s in scenario()) {
        let back = Scenario::from_ron(&s.to_ron(), None).unwrap();
        prop_assert_eq!(s, back);
    }
}
