//! Behaviours a sampled mutation run found unpinned: each test checks one
//! of them against a value from outside the program (a closed form, a
//! definition, a published reference output), so the mutant that changes
//! it fails here.

use crate::support::closed_forms::assert_rel;
use crate::support::stages::{fast, follower, plain};
use crate::support::warnings::warning;
use loopwright::engine::analyze;
use loopwright::engine::step::{shown_waves, StepResponse};
use loopwright::model::scenario::{Step, Supply};
use loopwright::model::{Scenario, Topology};
use loopwright::study::spread::{draws, histogram, mix};
use std::f64::consts::{E, PI};

fn step_of(s: &Scenario) -> StepResponse {
    analyze(s).step
}

fn rails(s: &mut Scenario, neg: f64, pos: f64) {
    s.supply = Some(Supply {
        neg,
        pos,
        ..Default::default()
    });
}

/// Superposition (linear circuit theory): while the stage stays inside
/// its rails, the step's figures do not depend on the DC level it starts
/// from. The first-order 10–90 % rise is τ·ln 9 (standard circuit texts).
#[test]
fn step_figures_do_not_move_with_the_source_dc_level() {
    let mut s = follower();
    rails(&mut s, 0.0, 5.0);
    s.amp.slew = Some(10e6);
    s.step = Some(Step::of(0.01));
    let (a0, gbw) = (s.amp.a0, s.amp.gbw);
    let tau = 1.0 / (2.0 * PI * gbw / a0 * (1.0 + a0));
    let mut seen = Vec::new();
    for dc in [0.5, 2.5, 4.0] {
        s.source.dc = Some(dc);
        let r = step_of(&s);
        assert_eq!(r.clipped, Some(false), "dc {dc}");
        assert_eq!(r.slew_limited, Some(false), "dc {dc}");
        assert_rel("rise", r.rise_s.unwrap(), tau * 9f64.ln(), 1e-5);
        // Settling to 0.1 %: τ·ln 1000 (first-order step response).
        assert_rel("settle", r.settle_s[1].unwrap(), tau * 1e3f64.ln(), 1e-5);
        seen.push(r.final_v.unwrap());
    }
    // The change of output, not the level: G·size for every start.
    for f in seen {
        assert_rel("final", f, 0.01 * a0 / (1.0 + a0), 1e-9);
    }
}

/// The 10–90 % time of an edge that slews all the way is 0.8·ΔV/SR (the
/// definition of slew rate), falling as well as rising.
#[test]
fn falling_edges_slew_at_the_slew_rate() {
    let mut s = fast(follower());
    s.amp.slew = Some(1e6);
    for size in [10.0, -10.0] {
        s.step = Some(Step::of(size));
        let r = step_of(&s);
        assert_eq!(r.slew_limited, Some(true), "size {size}");
        assert_eq!(r.clipped, Some(false), "size {size}");
        assert_rel("rise", r.rise_s.unwrap(), 0.8 * 10.0 / 1e6, 1e-4);
    }
    // An inverting −10 stage (rf/rg, ideal amplifier): a +1 V step drives
    // the output down by 10 V at the slew rate.
    let mut s = fast(plain(Topology::Inverting, 1e3, 10e3));
    s.amp.slew = Some(1e6);
    rails(&mut s, -15.0, 15.0);
    s.step = Some(Step::of(1.0));
    let r = step_of(&s);
    assert!(r.final_v.unwrap() < 0.0);
    assert_rel("final", r.final_v.unwrap(), -10.0, 1e-6);
    assert_eq!(r.slew_limited, Some(true));
    assert_eq!(r.clipped, Some(false));
    assert_rel("falling rise", r.rise_s.unwrap(), 0.8 * 10.0 / 1e6, 1e-4);
}

/// On ±5 V the same −10 stage slews down and holds at the − rail: the
/// edge covers 5 V at the slew rate, 10–90 % in 0.8·5 V/SR.
#[test]
fn falling_edges_stop_at_the_negative_rail() {
    let mut s = fast(plain(Topology::Inverting, 1e3, 10e3));
    s.amp.slew = Some(1e6);
    rails(&mut s, -5.0, 5.0);
    s.step = Some(Step::of(1.0));
    let r = step_of(&s);
    assert_eq!(r.clipped, Some(true));
    assert_eq!(r.slew_limited, Some(true));
    // The internal output held at −5 V behind ro = 1 µΩ: the load node
    // sits at −5 V to within a micro-part (divider rule).
    assert_rel("held at the rail", r.final_v.unwrap(), -5.0, 1e-6);
    assert_rel("rise", r.rise_s.unwrap(), 0.8 * 5.0 / 1e6, 1e-4);

    // A falling step into the − rail of a gain-2 stage with a 0.5 V swing
    // limit: x1 = −4.5 V behind ro 50 Ω into rf + rg = 2 kΩ (divider).
    let mut s = plain(Topology::NonInverting, 1e3, 1e3);
    s.amp.ro = 50.0;
    rails(&mut s, -5.0, 5.0);
    s.amp.swing_neg = Some(0.5);
    s.step = Some(Step::of(-3.0));
    let r = step_of(&s);
    assert_eq!(r.clipped, Some(true));
    assert_rel(
        "clipped final",
        r.final_v.unwrap(),
        -4.5 * 2000.0 / 2050.0,
        1e-9,
    );
}

/// Evenly spaced values fill 20 equal bins equally (definition of a
/// histogram with equal bins), away from zero so the offset matters.
#[test]
fn histogram_bins_evenly_spaced_values_equally() {
    let (lo, hi) = (10.0, 11.0);
    let values: Vec<f64> = (0..2000)
        .map(|i| lo + (i as f64 + 0.5) / 2000.0 * (hi - lo))
        .collect();
    let h = histogram(&values, lo, hi);
    assert_eq!(h.len(), 20);
    for (i, n) in h.iter().enumerate() {
        assert_eq!(*n, 100, "bin {i}: {h:?}");
    }
    // Negative values too.
    let values: Vec<f64> = values.iter().map(|v| -v).collect();
    let h = histogram(&values, -hi, -lo);
    assert!(h.iter().all(|n| *n == 100), "{h:?}");
}

/// Normal draws (tolerance = 3σ, truncated at ±3σ): the share within ±1σ
/// is erf(1/√2)/erf(3/√2) = 0.682689/0.997300 = 0.684538 (normal table).
#[test]
fn normal_draws_put_68_percent_within_one_sigma() {
    let n = 20_000;
    let mut inside = 0usize;
    let mut all = Vec::with_capacity(n);
    for i in 0..n as u64 {
        let d = draws(7, i, loopwright::model::scenario::Dist::Normal, 1)[0];
        if d.abs() <= 1.0 / 3.0 {
            inside += 1;
        }
        all.push(d);
    }
    let p = inside as f64 / n as f64;
    let want = 0.682_689 / 0.997_300;
    // Four binomial standard deviations.
    let sd = (want * (1.0 - want) / n as f64).sqrt();
    assert!((p - want).abs() < 4.0 * sd, "{p} vs {want}");
    // The histogram over ±1 holds the same: bins 7..13 cover ±0.3
    // (erf(0.9/√2)/erf(3/√2) = 0.631880/0.997300, normal table).
    let h = histogram(&all, -1.0, 1.0);
    let mid: usize = h[7..13].iter().sum();
    let want = 0.631_880 / 0.997_300;
    let p = mid as f64 / n as f64;
    assert!((p - want).abs() < 4.0 * sd, "{p} vs {want}: {h:?}");
}

/// SplitMix64's finaliser: the first output of the reference generator
/// seeded with 0 is 0xE220A8397B1DCDAF (the published reference
/// implementation's output; from memory, and quoted in the issue).
#[test]
fn the_seed_mixer_is_splitmix64() {
    assert_eq!(mix(0), 0xE220_A839_7B1D_CDAF);
    // Its second output (state advanced by the golden gamma once more).
    assert_eq!(mix(0x9E37_79B9_7F4A_7C15), 0x6E78_9E6A_A1B9_65F4);
}

/// A follower around a two-pole amplifier is a second-order system:
/// H = a0/(1 + a0) · ωn²/(s² + 2ζωn·s + ωn²), with ωn² = p1·p2·(1 + a0)
/// and 2ζωn = p1 + p2 (algebra on the two-pole model). Its resonance peak
/// is M_p = 1/(2ζ√(1 − ζ²)) (standard control texts), and the internal
/// output (ro negligible) peaks at source.peak × that.
#[test]
fn band_maximum_is_the_resonance_peak() {
    let mut s = follower();
    s.amp.a0 = 1e5;
    s.amp.gbw = 1e6;
    s.amp.fp2 = Some(500e3);
    s.band = (10.0, 10e6);
    s.source.peak = Some(1.0);
    let a = analyze(&s);
    let p1 = 2.0 * PI * s.amp.gbw / s.amp.a0;
    let p2 = 2.0 * PI * 500e3;
    let wn = (p1 * p2 * (1.0 + s.amp.a0)).sqrt();
    let zeta = (p1 + p2) / (2.0 * wn);
    let mp = 1.0 / (2.0 * zeta * (1.0 - zeta * zeta).sqrt());
    let g0 = s.amp.a0 / (1.0 + s.amp.a0);
    let int_peak = a.limits.int_peak_v.unwrap();
    assert_rel("internal peak", int_peak, g0 * mp, 1e-6);
    // The same from the peaking figure: peak × 10^(peaking/20) × G0.
    assert_rel(
        "from peaking",
        int_peak,
        g0 * 10f64.powf(a.peaking_db / 20.0),
        1e-6,
    );
}

/// DC uncertainty u of the internal output (superposition): vos times its
/// transfer (the noise gain, 1 + rf/rg with an ideal amplifier) plus
/// ios/2 times |z_p − z_n|, with z_p = (1 + rf/rg)·rs (a current out of
/// the + pin through the source resistance) and z_n = −rf (a current into
/// the − node through rf, the − node held at 0 V). The range is the DC
/// level ± (peak·G + u), and the swing ceiling the smaller distance from
/// level ± u to the usable rails.
#[test]
fn ranges_are_symmetric_about_the_dc_level() {
    let (rg, rf, rs) = (1e3, 1e3, 10e3);
    let mut s = fast(plain(Topology::NonInverting, rg, rf));
    rails(&mut s, -15.0, 15.0);
    s.amp.swing_pos = Some(1.0);
    s.amp.swing_neg = Some(1.0);
    s.amp.vos = Some(1e-3);
    s.amp.ios = Some(100e-9);
    s.amp.cm_pos = Some(1.5);
    s.amp.cm_neg = Some(1.5);
    s.source.r = Some(rs);
    s.source.dc = Some(6.0);
    s.source.peak = Some(0.5);
    let l = analyze(&s).limits;
    let g = 1.0 + rf / rg;
    let (zp, zn) = (g * rs, -rf);
    let u = 1e-3 * g + 0.5 * 100e-9 * (zp - zn).abs();
    let dc = 6.0 * g;
    let spread = 0.5 * g + u;
    assert_rel("int dc", l.int_dc_v.unwrap(), dc, 1e-6);
    assert_rel("int high", l.int_high_v.unwrap(), dc + spread, 1e-6);
    assert_rel("int low", l.int_low_v.unwrap(), dc - spread, 1e-6);
    assert_rel(
        "headroom +",
        l.headroom_high_v.unwrap(),
        (15.0 - 1.0) - (dc + spread),
        1e-6,
    );
    // Biased near the + rail: the ceiling is the distance up.
    assert_rel(
        "swing ceiling",
        l.swing_ceiling_v.unwrap(),
        (15.0 - 1.0) - (dc + u),
        1e-6,
    );
    // The + pin: its level is the source's (no bias current), its
    // uncertainty ios/2·rs (the pin does not move with the − pin's
    // current, nor with vos, which sits behind it).
    let pin_u = 0.5 * 100e-9 * rs;
    assert_rel("cm high", l.cm_high_v.unwrap(), 6.0 + 0.5 + pin_u, 1e-6);
    assert_rel("cm low", l.cm_low_v.unwrap(), 6.0 - 0.5 - pin_u, 1e-6);
    assert_rel(
        "cm headroom",
        l.cm_headroom_v.unwrap(),
        (15.0 - 1.5) - (6.0 + 0.5 + pin_u),
        1e-6,
    );
}

/// Side-by-side steps of different sizes are each divided by their own
/// final value: they level off at 1, and a first-order response reaches
/// 1 − 1/e at t = τ (definition of the time constant).
#[test]
fn normalised_waves_level_off_at_one() {
    let mut a = plain(Topology::NonInverting, 1e3, 1e3);
    let mut b = a.clone();
    a.step = Some(Step::of(0.01));
    b.step = Some(Step::of(0.05));
    let (ra, rb) = (step_of(&a), step_of(&b));
    let a0 = a.amp.a0;
    let tau = 1.0 / (2.0 * PI * a.amp.gbw / a0 * (1.0 + a0 * 0.5));
    let (waves, divided) = shown_waves(&[&ra, &rb], 20.0 * tau, 21);
    assert!(divided);
    for w in &waves {
        assert_eq!(w.len(), 21);
        assert_rel("starts at 0", w[0].1 + 1.0, 1.0, 1e-9);
        assert_rel("at τ", w[1].1, 1.0 - 1.0 / E, 1e-4);
        assert_rel("levels off", w[20].1, 1.0, 1e-6);
    }
}

/// The waveform is known only inside the simulated window: outside it
/// there is no value (not an extrapolation).
#[test]
fn no_value_outside_the_window() {
    let r = step_of(&follower());
    let end = r.window_s().unwrap();
    assert!(r.at(0.0).is_some());
    assert!(r.at(end).is_some());
    assert_eq!(r.at(-1e-3 * end), None);
    assert_eq!(r.at(end * (1.0 + 1e-3)), None);
}

/// The clip warning's share of the drop across ro is Ohm's law: ro times
/// the amplifier's peak current.
#[test]
fn clip_warning_names_the_ro_drop() {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/single_supply_inverter_clips.ron"
    );
    let s = loopwright::model::Scenario::load(std::path::Path::new(path)).unwrap();
    let w = warning(&s, "output-swing").expect("the stage clips");
    let l = analyze(&s).limits;
    let want = s.amp.ro * l.iout_peak_a.unwrap();
    let (_, rest) = w.text.split_once("up to ").expect("names the drop");
    let (value, _) = rest.split_once(" of that").unwrap();
    let got = parse_volts(value);
    // The text has three significant figures.
    assert_rel("ro drop", got, want, 5e-3);
}

/// "57.3 mV" → 0.0573 (SI prefixes, IEC 80000-1).
fn parse_volts(text: &str) -> f64 {
    let t = text.trim().trim_end_matches('V').trim();
    let (num, scale) = match t.chars().last() {
        Some('m') => (&t[..t.len() - 1], 1e-3),
        Some('µ') | Some('u') => (&t[..t.len() - 'µ'.len_utf8()], 1e-6),
        Some('n') => (&t[..t.len() - 1], 1e-9),
        _ => (t, 1.0),
    };
    num.trim().parse::<f64>().unwrap() * scale
}

/// An unstable stage has no step figures, but its step size is still the
/// one asked for.
#[test]
fn an_unstable_stage_keeps_its_step_size() {
    let mut s = follower();
    s.amp.a0 = 1e6;
    s.amp.gbw = 100.0;
    s.amp.fp2 = Some(1e-3);
    s.amp.ro = 1e3;
    s.load.c = Some(1.0);
    s.step = Some(Step::of(0.25));
    let a = analyze(&s);
    assert_eq!(a.stable, Some(false));
    assert_eq!(a.step.size_v, 0.25);
    assert_eq!(a.step.rise_s, None);
}

/// The advice after a lack of margin fits the stage (common practice): an
/// isolation resistor when a load capacitor is driven directly, a larger
/// one or a feedback capacitor when there is one, a feedback capacitor or
/// more noise gain without a load capacitor.
#[test]
fn margin_advice_fits_the_stage() {
    let mut s = follower();
    s.amp.fp2 = Some(200e3);
    s.amp.ro = 50.0;
    s.load.c = Some(100e-9);
    let text = |s: &Scenario| warning(s, "phase-margin").expect("low margin").text;
    assert!(
        text(&s).contains("an isolation resistor before the load capacitance"),
        "{}",
        text(&s)
    );
    s.stage.riso = Some(1.0);
    assert!(
        text(&s).contains("a larger isolation resistor or a feedback capacitor"),
        "{}",
        text(&s)
    );
    s.stage.riso = None;
    s.load.c = None;
    s.amp.fp2 = Some(300e3);
    assert!(
        text(&s).contains("a feedback capacitor or a higher noise gain"),
        "{}",
        text(&s)
    );
}

/// An amplifier with no output resistance (ro = 0, outside the accepted
/// range, reachable through the library): the single-pole non-inverting
/// stage's DC gain is a0/(1 + a0/G) with G = 1 + rf/rg (feedback
/// formula, standard texts), and its output impedance is zero.
#[test]
fn an_ideal_output_solves_by_the_feedback_formula() {
    let mut s = plain(Topology::NonInverting, 1e3, 9e3);
    s.amp.ro = 0.0;
    let a = analyze(&s);
    let a0 = s.amp.a0;
    assert_rel("dc gain", a.dc_gain, a0 / (1.0 + a0 / 10.0), 1e-9);
    assert_eq!(a.zout_dc_ohm, 0.0);
    // With a 1 kΩ load the gain does not move: nothing to divide.
    s.load.r = Some(1e3);
    assert_rel("loaded", analyze(&s).dc_gain, a0 / (1.0 + a0 / 10.0), 1e-9);
}

/// Bias currents flowing into both inputs move the DC level at the
/// output by ib·(rf − (1 + rf/rg)·rs) on a non-inverting stage
/// (superposition with an ideal amplifier, standard op-amp texts: the −
/// pin's current returns through rf, the + pin's through the source
/// resistance, amplified by the noise gain). With rs = rf ∥ rg it
/// cancels (the bias-balance rule, common practice).
#[test]
fn bias_currents_move_the_dc_level() {
    let (rg, rf, rs, ib) = (1e3, 9e3, 3e3, 200e-9);
    let mut s = fast(plain(Topology::NonInverting, rg, rf));
    rails(&mut s, -15.0, 15.0);
    s.amp.ib = Some(ib);
    s.source.r = Some(rs);
    s.source.dc = Some(0.5);
    s.source.peak = Some(0.1);
    let l = analyze(&s).limits;
    let g = 1.0 + rf / rg;
    let want = 0.5 * g + ib * (rf - g * rs);
    assert_rel("int dc", l.int_dc_v.unwrap(), want, 1e-6);
    assert_rel("out dc", l.out_dc_v.unwrap(), want, 1e-6);
    // The + pin sits below the source by ib·rs (Ohm's law).
    let cm_mid = 0.5 * (l.cm_low_v.unwrap() + l.cm_high_v.unwrap());
    assert_rel("pin dc", cm_mid, 0.5 - ib * rs, 1e-6);
    // Balanced: rs = rf·rg/(rf + rg) = 900 Ω leaves only the source.
    s.source.r = Some(rf * rg / (rf + rg));
    let l = analyze(&s).limits;
    assert_rel("balanced", l.int_dc_v.unwrap(), 0.5 * g, 1e-6);
}
