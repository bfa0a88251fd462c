//! Every element of the stage against a closed form of the stage that
//! needs it: cf, cin at each input, riso, a follower's real rf. (The
//! asymptotic-gain and Blackman checks in engine_checks.rs hold for any
//! wiring; these do not.) Tolerances are a few times the measured error.

use crate::support::closed_forms::{
    assert_rel, closed_form_margin, johnson, open_loop, unity_crossing,
};
use crate::support::stages::{fast, follower, plain};
use loopwright::engine::Circuit;
use loopwright::judge::evaluate;
use loopwright::model::scenario::Scenario;
use loopwright::model::Topology;
use num_complex::Complex64 as C64;
use std::f64::consts::PI;

const J: C64 = C64::new(0.0, 1.0);

/// |closed-loop gain| of the scenario at f.
fn gain_at(s: &Scenario, f: f64) -> C64 {
    Circuit::new(s).eval(f).unwrap().gain
}

#[test]
fn feedback_capacitor_in_an_inverting_stage() {
    // Ideal inverting amplifier with Zf = rf ∥ cf (textbook):
    // H = −(rf/rg)/(1 + jf/fz), a closed-loop pole at fz = 1/(2π·rf·cf).
    let mut s = fast(plain(Topology::Inverting, 1e3, 10e3));
    s.stage.cf = Some(1.6e-9);
    let fz = 1.0 / (2.0 * PI * 10e3 * 1.6e-9);
    for f in [0.1 * fz, fz, 10.0 * fz] {
        let want = -10.0 / (1.0 + J * f / fz);
        let got = gain_at(&s, f);
        // Measured error ≤ 1e-7 (finite a0, |A| falls above 1 kHz);
        // tolerance 5e-7.
        assert_rel(&format!("|H| at {f:.0} Hz"), got.norm(), want.norm(), 5e-7);
        assert!((got.arg() - want.arg()).abs() < 1e-6, "{got} vs {want}");
    }
}

#[test]
fn feedback_capacitor_in_a_non_inverting_stage() {
    // Ideal non-inverting amplifier (textbook): H = 1 + (rf ∥ cf)/rg
    // = (G + jf/fz)/(1 + jf/fz), G = 1 + rf/rg: a pole at fz = 1/(2π·rf·cf)
    // and a zero G times higher, so the gain falls from G towards 1.
    let mut s = fast(plain(Topology::NonInverting, 1e3, 10e3));
    s.stage.cf = Some(1.6e-9);
    let fz = 1.0 / (2.0 * PI * 10e3 * 1.6e-9);
    for f in [0.1 * fz, fz, 11.0 * fz, 100.0 * fz] {
        let want = (11.0 + J * f / fz) / (1.0 + J * f / fz);
        let got = gain_at(&s, f);
        // Measured error ≤ 1e-7 (finite a0, |A| falls above 1 kHz);
        // tolerance 5e-7.
        assert_rel(&format!("|H| at {f:.0} Hz"), got.norm(), want.norm(), 5e-7);
    }
}

#[test]
fn input_capacitance_at_both_inputs_of_a_non_inverting_stage() {
    // Ideal amplifier, cin from each pin to ground, source r into the + pin
    // (our nodal derivation): V+ = Vs/(1 + jω·rs·cin) (an input pole), and
    // the − pin sees Zg = rg ∥ 1/(jω·cin), so the gain above it is
    // 1 + rf/Zg = 1 + rf/rg + jω·rf·cin (a zero in the noise gain):
    //   H = (1 + rf/rg + jω·rf·cin)/(1 + jω·rs·cin).
    let mut s = fast(plain(Topology::NonInverting, 10e3, 90e3));
    s.amp.cin = Some(10e-12);
    s.source.r = Some(100e3);
    for f in [10e3, 100e3, 300e3] {
        let w = 2.0 * PI * f;
        let want = (10.0 + J * w * 90e3 * 10e-12) / (1.0 + J * w * 100e3 * 10e-12);
        // Measured error ≤ 5e-7 at 300 kHz (|A| ≈ 3e6); tolerance 2e-6.
        assert_rel(
            &format!("|H| at {f} Hz"),
            gain_at(&s, f).norm(),
            want.norm(),
            2e-6,
        );
    }
}

#[test]
fn minus_input_capacitance_costs_phase_margin() {
    // cin at the − pin puts a pole in the feedback fraction (textbook):
    // β = Zg/(rf + Zg), Zg = rg ∥ 1/(jω·cin), a pole at 1/(2π·(rg∥rf)·cin);
    // with the single-pole model T = A(jf)·β(jf)·Zfb/(Zfb + ro), the last
    // factor the divider of ro into the network Zfb = rf + Zg (voltage
    // divider). Margin from the closed form (crossover by bisection),
    // against ≈ 90° without cin.
    let mut s = plain(Topology::NonInverting, 100e3, 100e3);
    s.amp.cin = Some(10e-12);
    let a = evaluate(&s);
    let ro = s.amp.ro;
    let beta = |f: f64| {
        let zg = 100e3 / (1.0 + J * 2.0 * PI * f * 100e3 * 10e-12);
        let zfb = 100e3 + zg;
        zg / zfb * zfb / (zfb + ro)
    };
    let (fc, pm) = closed_form_margin(|f| open_loop(&s, f) * beta(f));
    // Measured errors 5e-12 and 6e-14°; tolerances 5e-11 and 1e-11°.
    assert_rel("crossover", a.analysis.crossover_hz.unwrap(), fc, 5e-11);
    assert!(
        (a.analysis.phase_margin_deg.unwrap() - pm).abs() < 1e-11,
        "{} vs {pm}",
        a.analysis.phase_margin_deg.unwrap()
    );
    assert!(pm < 70.0, "the pole costs margin: {pm}");
}

#[test]
fn isolation_resistor_adds_to_the_output_impedance() {
    // Follower (β = 1, feedback before riso), no load (textbook):
    // Zout = riso + ro/(1 + A(jf)); at DC riso + ro/(1 + a0).
    let mut s = follower();
    s.amp.ro = 75.0;
    s.stage.riso = Some(50.0);
    let a = evaluate(&s);
    assert_rel(
        "Zout at DC",
        a.analysis.zout_dc_ohm,
        50.0 + 75.0 / (1.0 + 1e5),
        1e-12,
    );
    let c = Circuit::new(&s);
    for f in [1e3, 100e3, 1e6] {
        let want = 50.0 + 75.0 / (1.0 + open_loop(&s, f));
        // Measured error ≤ 1e-15; tolerance 1e-12.
        assert_rel(
            &format!("|Zout| at {f} Hz"),
            c.eval(f).unwrap().zout.norm(),
            want.norm(),
            1e-12,
        );
    }
}

#[test]
fn isolation_resistor_restores_phase_margin() {
    // Follower driving C through ro and riso, feedback taken before riso
    // (our nodal derivation): T = A(jf)·Z/(ro + Z), Z = riso + 1/(jωC):
    // a pole at 1/(2π·(ro + riso)·C) and a zero at 1/(2π·riso·C). Without
    // riso the zero is gone and the margin collapses.
    let margin = |riso: f64| {
        let mut s = follower();
        s.amp.ro = 75.0;
        s.load.c = Some(10e-9);
        s.stage.riso = (riso > 0.0).then_some(riso);
        let a = evaluate(&s);
        let z = |f: f64| riso + 1.0 / (J * 2.0 * PI * f * 10e-9);
        let (_, want) = closed_form_margin(|f| open_loop(&s, f) * z(f) / (75.0 + z(f)));
        let got = a.analysis.phase_margin_deg.unwrap();
        // Measured error ≤ 2e-13°; tolerance 1e-11°.
        assert!((got - want).abs() < 1e-11, "riso {riso}: {got} vs {want}");
        got
    };
    let bare = margin(0.0);
    let isolated = margin(50.0);
    assert!(isolated > bare + 20.0, "{bare} → {isolated}");
}

#[test]
fn follower_with_a_real_feedback_resistor() {
    // Follower, rf from the output to the − pin, rin between the pins, ideal
    // source (our nodal derivation): i = (Vs − V−)/rin flows on through rf,
    // so V− = (Vo + k·Vs)/(1 + k), k = rf/rin, and Vo = A·(Vs − V−) gives
    //   Vo/Vs = a0/(1 + k + a0)
    // (a wire, k = 0, gives the familiar a0/(1 + a0)). rf's thermal noise
    // reaches the output as √(4kT·rf) (fast amplifier, V− held at 0).
    let mut s = follower();
    s.amp.a0 = 1e3;
    s.stage.rf = Some(10e3);
    s.amp.rin = Some(100e3);
    let a = evaluate(&s);
    // Measured error ≈ 1e-15; tolerance 1e-12.
    assert_rel(
        "DC gain",
        a.analysis.dc_gain,
        1e3 / (1.0 + 0.1 + 1e3),
        1e-12,
    );
    let mut n = fast(follower());
    n.stage.rf = Some(10e3);
    let c = Circuit::new(&n);
    let k = c.net.noise.iter().position(|x| x.key == "rf").unwrap();
    let got = c.eval(1e3).unwrap().noise_psd[k].sqrt();
    assert_rel("rf noise", got, johnson(10e3, 25.0), 1e-8);
}

/// The figures two scenarios should share exactly.
fn same_figures(a: &Scenario, b: &Scenario, what: &str) {
    let (x, y) = (evaluate(a), evaluate(b));
    for (name, p, q) in [
        ("dc gain", x.analysis.dc_gain, y.analysis.dc_gain),
        (
            "f−3dB",
            x.analysis.f_3db_hz.unwrap_or(0.0),
            y.analysis.f_3db_hz.unwrap_or(0.0),
        ),
        ("peaking", x.analysis.peaking_db, y.analysis.peaking_db),
        (
            "phase margin",
            x.analysis.phase_margin_deg.unwrap_or(0.0),
            y.analysis.phase_margin_deg.unwrap_or(0.0),
        ),
        ("zout", x.analysis.zout_dc_ohm, y.analysis.zout_dc_ohm),
        ("noise rms", x.analysis.noise_rms, y.analysis.noise_rms),
        (
            "noise at 1 kHz",
            x.analysis.noise_density_1khz,
            y.analysis.noise_density_1khz,
        ),
    ] {
        assert_eq!(p, q, "{what}: {name}");
    }
    let codes = |w: &[loopwright::judge::Warning]| w.iter().map(|w| w.code).collect::<Vec<_>>();
    assert_eq!(codes(&x.warnings), codes(&y.warnings), "{what}: warnings");
}

#[test]
fn zero_means_absent() {
    // README: zero means "absent" for cf, riso, cin and the noise corners.
    let mut none = loopwright::files::load::demo();
    none.stage.cf = None;
    none.stage.riso = None;
    none.amp.cin = None;
    none.amp.vnoise_corner = None;
    none.amp.inoise_corner = None;
    let mut zero = none.clone();
    zero.stage.cf = Some(0.0);
    zero.stage.riso = Some(0.0);
    zero.amp.cin = Some(0.0);
    zero.amp.vnoise_corner = Some(0.0);
    zero.amp.inoise_corner = Some(0.0);
    same_figures(&none, &zero, "zero vs absent");
    // And a present value does change them (the comparison can fail).
    let mut cf = none.clone();
    cf.stage.cf = Some(100e-12);
    assert_ne!(
        evaluate(&cf).analysis.f_3db_hz,
        evaluate(&none).analysis.f_3db_hz
    );
}

#[test]
fn a_follower_ignores_rg() {
    // README: a follower ignores rg.
    let mut bare = loopwright::files::load::demo();
    bare.stage.topology = Topology::Follower;
    bare.stage.rg = None;
    bare.stage.rf = None;
    for rg in [1.0, 1e3, 1e6] {
        let mut with = bare.clone();
        with.stage.rg = Some(rg);
        same_figures(&bare, &with, &format!("rg {rg}"));
    }
}

#[test]
fn crossover_helper_finds_a_known_root() {
    // The bisection helper against a root known in closed form:
    // |1e6/(jf)| = 1 at f = 1e6.
    assert_rel("root", unity_crossing(1.0, 1e9, |f| 1e6 / f), 1e6, 1e-12);
}

#[test]
fn dc_loop_gain_holds_its_digits_at_the_ends_of_the_accepted_ranges() {
    // Textbook return ratio at DC of a stage with a Thevenin output (a0
    // behind ro), no input current (no rin) and an ideal source: the
    // output divider RL‖(rf + rg) against ro, then the feedback divider
    // rg/(rg + rf) — the same for both topologies with the source at 0 V.
    // At rg 1 mΩ, rf 10 TΩ and a 1 mΩ load it is ~1e-16, and must keep
    // its sign and its digits (issue 25: it read −1.1e-17).
    let (lo, hi) = (1e-3, 1e13); // README "Accepted ranges": 1 mΩ to 10 TΩ
    for topology in [Topology::NonInverting, Topology::Inverting] {
        for ro in [1e-3, 1.0, 100.0, 1e6] {
            for rl in [lo, 1e3, hi] {
                for (rg, rf) in [(lo, hi), (hi, lo), (lo, lo), (1e3, hi)] {
                    let mut s = plain(topology, rg, rf);
                    s.amp.ro = ro;
                    s.load.r = Some(rl);
                    let a0 = s.amp.a0;
                    let rpar = 1.0 / (1.0 / rl + 1.0 / (rf + rg));
                    let want = a0 * rpar / (ro + rpar) * rg / (rg + rf);
                    let got = loopwright::engine::analyze(&s).loop_gain_dc;
                    assert!(
                        got > 0.0 && (got / want - 1.0).abs() < 1e-4,
                        "{topology:?} rg {rg} rf {rf} rl {rl} ro {ro}: {got} vs {want}"
                    );
                }
            }
        }
    }
}
