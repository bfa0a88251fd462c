//! The noise model against closed forms: where the voltage-noise generator
//! sits, current noise through the source, the 1/f corners, temperature,
//! the riso/load divider. Each check value names its source; tolerances are
//! a few times the error the engine really shows (measured, noted beside).

use crate::support::cli::{stdout_of, temp_dir};
use crate::support::closed_forms::{assert_rel, johnson, noise_transfer};
use crate::support::stages::{fast, follower, in_range, plain};
use loopwright::engine::Circuit;
use loopwright::judge::evaluate;
use loopwright::model::scenario::Scenario;
use loopwright::model::Topology;

#[test]
fn low_rin_voltage_noise_gain_closed_form() {
    // Nodal analysis (our derivation) of a non-inverting stage with an
    // ideal-ish amplifier (sense draws no current, V(sense+) = V(−)), the
    // voltage-noise generator en between the + pin and the sensed input,
    // rin from the + pin to the − pin, source r from the + pin to ground:
    //   V− = V+ + en                              (the generator)
    //   KCL at +:  V+/rs = (V− − V+)/rin = en/rin  →  V+ = en·rs/rin
    //   KCL at −:  (Vo − V−)/rf = V−/rg + en/rin
    //   →  Vo/en = (1 + rs/rin)(1 + rf/rg) + rf/rin.
    // With rin → ∞ this is the textbook noise gain 1 + rf/rg.
    for (rs, rin, rg, rf) in [
        (10e3, 10e3, 1e3, 9e3),
        (1e3, 5e3, 2.2e3, 22e3),
        (100.0, 1e3, 10e3, 10e3),
    ] {
        let mut s = fast(plain(Topology::NonInverting, rg, rf));
        s.amp.rin = Some(rin);
        s.amp.vnoise = 1e-9;
        s.source.r = Some(rs);
        let c = Circuit::new(&s);
        let want = (1.0 + rs / rin) * (1.0 + rf / rg) + rf / rin;
        // Measured error ≤ 2.1e-8 (finite a0 = 1e9: ≈ NG/a0); tolerance 1e-7.
        assert_rel(
            &format!("en gain rs {rs} rin {rin}"),
            noise_transfer(&c, "vnoise", 10.0),
            want,
            1e-7,
        );
    }
}

#[test]
fn follower_on_100_megohm_voltage_noise_is_not_filtered_by_cin() {
    // The generator sits in the amplifier's sensed input, so on a 100 MΩ
    // source with 4 pF at the + pin the voltage noise is not low-passed:
    // its rms over the band is en·√∫(1 + fc/f)df = en·√((fH − fL) + fc·ln(fH/fL))
    // (textbook 1/f integral), times the follower's en gain 1 + rs/rin from
    // the closed form above with rg → ∞ (≈ 1 + 1e-4 here).
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/buffer_100meg_source.ron"
    );
    let s = Scenario::load(std::path::Path::new(path)).unwrap();
    let (lo, hi) = s.band;
    let fc = s.amp.vnoise_corner.unwrap();
    let gain = 1.0 + s.source.r.unwrap() / s.amp.rin.unwrap();
    let want = s.amp.vnoise * ((hi - lo) + fc * (hi / lo).ln()).sqrt() * gain;
    assert!((want - 657e-9).abs() < 1e-9, "about 657 nV: {want:e}");
    let a = evaluate(&s);
    let en = a
        .analysis
        .noise_sources
        .iter()
        .find(|n| n.key == "vnoise")
        .unwrap();
    // Measured error 3.9e-6. Integration alone errs up to ≈ 3e-5 where white
    // and 1/f are comparable (flicker test in engine_checks.rs), and cin
    // shunts the rs/rin term (≤ 1e-4) above rs·cin's 400 Hz; tolerance 2e-4,
    // while the old placement behind cin gave 540 nV (18 % low).
    assert_rel("voltage-noise rms", en.rms, want, 2e-4);
}

#[test]
fn plus_input_capacitance_filters_the_signal_not_the_voltage_noise() {
    // Ideal-amplifier follower, rin absent: the en gain is exactly 1 whatever
    // cin and the source r are (no current flows in rs, so V+ = 0), while the
    // signal sees the input pole 1/(2π·rs·cin) (RC low-pass, textbook).
    let mut s = fast(follower());
    s.amp.vnoise = 1e-9;
    s.amp.cin = Some(10e-12);
    s.source.r = Some(1e6);
    let c = Circuit::new(&s);
    let fp = 1.0 / (2.0 * std::f64::consts::PI * 1e6 * 10e-12);
    for f in [1e3, 15.9e3, 100e3] {
        // Measured error 1e-9 (finite a0) for both; tolerance 1e-8.
        assert_rel("en gain", noise_transfer(&c, "vnoise", f), 1.0, 1e-8);
        let want = 1.0 / (1.0 + (f / fp).powi(2)).sqrt();
        let got = c.eval(f).unwrap().gain.norm();
        assert_rel(&format!("signal at {f} Hz"), got, want, 1e-8);
    }
}

#[test]
fn current_noise_through_the_source_resistance() {
    // Textbook: the + input's current noise drops across rs and is amplified
    // by the noise gain: in·rs·(1 + rf/rg); the − input's flows through rf:
    // in·rf (virtual ground at the − pin for a noise current).
    let mut s = fast(plain(Topology::NonInverting, 1e3, 9e3));
    s.amp.inoise = 1e-12;
    s.source.r = Some(47e3);
    let c = Circuit::new(&s);
    // Measured error 1e-8 (finite a0); tolerance 5e-8.
    assert_rel(
        "in+ gain",
        noise_transfer(&c, "inoise_plus", 100.0),
        47e3 * 10.0,
        5e-8,
    );
    assert_rel(
        "in− gain",
        noise_transfer(&c, "inoise_minus", 100.0),
        9e3,
        5e-8,
    );
}

#[test]
fn johnson_noise_at_other_temperatures() {
    // Johnson–Nyquist √(4kTR) with T = temp_c + 273.15 K (k from SI 2019);
    // e.g. 10 kΩ at 125 °C ≈ 14.8 nV/√Hz. A fast follower passes the
    // source resistor's noise with gain 1.
    for t in [-55.0, 0.0, 85.0, 125.0] {
        let mut s = fast(follower());
        s.source.r = Some(10e3);
        s.temp_c = t;
        let a = evaluate(&s);
        // Measured error 1e-9 (finite a0); tolerance 1e-8.
        assert_rel(
            &format!("10 kΩ at {t} °C"),
            a.analysis.noise_density_1khz,
            johnson(10e3, t),
            1e-8,
        );
    }
    assert!((johnson(10e3, 125.0) - 14.8e-9).abs() < 0.05e-9);
}

#[test]
fn current_noise_corner() {
    // Textbook 1/f rise: in²(1 + fc/f); through rs on a fast follower the
    // density at f is in·rs·√(1 + fc/f) and the band power is
    // (in·rs)²·((fH − fL) + fc·ln(fH/fL)). With fc = 1 kHz over 1…100 Hz the
    // 1/f part is 4.7× the white part, so ignoring the corner fails.
    let mut s = fast(follower());
    s.amp.inoise = 1e-12;
    s.amp.inoise_corner = Some(1e3);
    s.source.r = Some(1e6);
    s.temp_c = -273.149_999_999; // resistor noise ≈ 0 (T ≈ 1e-9 K)
    s.band = (1.0, 100.0);
    let a = evaluate(&s);
    let c = Circuit::new(&s);
    let p = c.eval(10.0).unwrap();
    // Measured error 1e-9 (finite a0); tolerance 1e-8.
    assert_rel(
        "density at 10 Hz",
        p.noise_density(),
        1e-12 * 1e6 * (1.0 + 1e3 / 10.0f64).sqrt(),
        1e-8,
    );
    let (lo, hi) = s.band;
    let want = 1e-12 * 1e6 * ((hi - lo) + 1e3 * (hi / lo).ln()).sqrt();
    // Measured error 4.9e-6 (integration); tolerance 2e-5.
    assert_rel(
        "rms with the current-noise corner",
        a.analysis.noise_rms,
        want,
        2e-5,
    );
}

#[test]
fn noise_at_the_load_through_the_isolation_divider() {
    // Feedback is taken before riso: the amplifier output (≈ 0 Ω) carries
    // en·NG and the load terminal sees it through the divider RL/(RL + riso)
    // (voltage divider). riso's own thermal noise current sees riso ∥ RL:
    // its density at the load is √(4kT/riso)·(riso·RL/(riso + RL)).
    let mut s = fast(plain(Topology::NonInverting, 1e3, 9e3));
    s.amp.vnoise = 1e-9;
    s.stage.riso = Some(100.0);
    s.load.r = Some(900.0);
    let c = Circuit::new(&s);
    // Measured error 1e-8 (finite a0) and 2e-16; tolerance 5e-8.
    assert_rel(
        "en at the load",
        noise_transfer(&c, "vnoise", 100.0),
        9.0,
        5e-8,
    );
    let riso_psd = {
        let k = c.net.noise.iter().position(|n| n.key == "riso").unwrap();
        c.eval(100.0).unwrap().noise_psd[k].sqrt()
    };
    let want = johnson(100.0, 25.0) / 100.0 * (100.0 * 900.0 / 1000.0);
    assert_rel("riso noise at the load", riso_psd, want, 5e-8);
}

#[test]
fn minus_input_capacitance_raises_the_noise_gain() {
    // Non-inverting noise gain with cin at the − pin (textbook): 1 + rf/Zg,
    // Zg = rg ∥ 1/(jωcin), i.e. |1 + rf·(1/rg + jωcin)| — a zero at
    // 1/(2π·(rg∥rf)·cin) (3.2 MHz for 5 kΩ and 10 pF).
    let mut s = fast(plain(Topology::NonInverting, 10e3, 10e3));
    s.amp.vnoise = 1e-9;
    s.amp.cin = Some(10e-12);
    let c = Circuit::new(&s);
    for f in [10e3, 1e6, 3.2e6] {
        let w = 2.0 * std::f64::consts::PI * f;
        let want = num_complex::Complex64::new(1.0 + 10e3 / 10e3, 10e3 * w * 10e-12).norm();
        // Measured error 6.4e-6 at 3.2 MHz (|A| ≈ 3e5 there); tolerance 2e-5.
        assert_rel(
            &format!("noise gain at {f} Hz"),
            noise_transfer(&c, "vnoise", f),
            want,
            2e-5,
        );
    }
}

/// At DC a 1/f noise density en·(1 + fc/f) has no finite value (the
/// 1/f model itself, any noise text): with a corner given, the density
/// at 0 Hz is undefined; without corners it is the white density, the
/// limit of the density as f → 0.
#[test]
fn density_at_dc_with_and_without_a_corner() {
    let mut s = plain(Topology::NonInverting, 1e3, 9e3);
    s.amp.vnoise = 10e-9;
    s.amp.inoise = 1e-12;
    s.source.r = Some(1e3);
    let white = Circuit::new(&s);
    let dc = white.eval(0.0).unwrap().noise_density();
    let low = white.eval(1e-6).unwrap().noise_density();
    assert_rel("white density at DC", dc, low, 1e-9);
    s.amp.vnoise_corner = Some(100.0);
    let pink = Circuit::new(&s);
    assert!(!pink.eval(0.0).unwrap().noise_density().is_finite());
    // The report gives null there.
    let dir = temp_dir("noise-dc");
    let file = dir.join("s.ron");
    std::fs::write(&file, in_range(s).to_ron()).unwrap();
    let out = stdout_of(&["report", file.to_str().unwrap(), "--json", "--at", "0"]);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert!(
        v["points"][0]["noise_density"].is_null(),
        "{}",
        v["points"][0]
    );
    std::fs::remove_dir_all(&dir).ok();
}
