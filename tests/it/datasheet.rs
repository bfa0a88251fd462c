//! From datasheet figures to the amplifier model: each derivation against
//! its closed form, and the figures the model cannot reconcile.

use loopwright::model::datasheet::{self, TestCircuit};

fn close(x: f64, want: f64, rel: f64) -> bool {
    ((x - want) / want).abs() <= rel
}

#[test]
fn phase_margin_68_deg_at_1_mhz_gives_fp2_and_gbw() {
    // Issue 28's check: fp2 = 1 MHz/tan 22° = 2.475 MHz; gbw = f_u·√(1 + (f_u/fp2)²)
    // = 1.0785 MHz (hand-computed: tan 22° = 0.404026).
    let p = datasheet::poles_from_crossing(1.0e6, 68.0).unwrap();
    assert!(close(p.fp2, 2.475e6, 1e-3), "fp2 {}", p.fp2);
    assert!(close(p.gbw, 1.0785e6, 1e-4), "gbw {}", p.gbw);
    // The model then crosses unity at f_u and has the margin asked for.
    let a = datasheet::open_loop(1.0e6, p.gbw, Some(p.fp2), 1.0e6);
    assert!(close(a.norm(), 1.0, 1e-5), "|A(f_u)| {}", a.norm());
    // Phase of A = −atan(f/fp1) − atan(f/fp2); PM = 180° + phase (textbook).
    let pm = 180.0 + a.arg().to_degrees();
    assert!((pm - 68.0).abs() < 1e-3 * 90.0 + 0.1, "pm {pm}");
}

#[test]
fn phase_margin_with_gbw_given_finds_the_same_crossing() {
    // gbw = f_u / sin PM (from gbw = f_u·√(1 + tan²(90° − PM))): 1 MHz/sin 68°.
    let gbw = 1.0e6 / 68f64.to_radians().sin();
    let p = datasheet::poles_from_gbw(gbw, 68.0).unwrap();
    assert!(close(p.f_u, 1.0e6, 1e-9), "f_u {}", p.f_u);
    assert!(close(p.fp2, 1.0e6 / 22f64.to_radians().tan(), 1e-9));
}

#[test]
fn a_margin_the_single_pole_already_exceeds_is_refused_plainly() {
    for pm in [90.0, 95.0] {
        let e = datasheet::poles_from_crossing(1.0e6, pm).unwrap_err();
        assert_eq!(e.field, "phase_margin");
        assert!(e.message.contains("single pole"), "{}", e.message);
    }
    for pm in [0.0, -5.0, f64::NAN] {
        let e = datasheet::poles_from_gbw(1.0e6, pm).unwrap_err();
        assert!(e.message.contains("above 0°"), "{}", e.message);
    }
}

#[test]
fn ro_from_closed_loop_output_impedance_uses_the_complex_gain() {
    // Issue 28's check: non-inverting gain 10, |Z_cl| = 0.5 Ω at 0.8 kHz,
    // a0 = 1e5 (100 dB), |A| = 70 dB (3162.28) there (single pole). With the
    // complex A: ro = 158.1 Ω; treating A as real: 0.5·(1 + 316.2) = 158.6 Ω.
    let a0 = 1.0e5;
    let a_mag = 10f64.powf(70.0 / 20.0);
    // Single pole: |A| = a0/√(1 + (f/fp1)²) → fp1 = f/√((a0/|A|)² − 1).
    let fp1 = 800.0 / ((a0 / a_mag).powi(2) - 1.0).sqrt();
    let gbw = a0 * fp1;
    let ro =
        datasheet::ro_from_closed_loop(0.5, 800.0, TestCircuit::NonInverting(10.0), a0, gbw, None)
            .unwrap();
    assert!((ro - 158.1).abs() < 0.05, "ro {ro}");
    assert!(
        (0.5 * (1.0 + a_mag / 10.0) - 158.6).abs() < 0.05,
        "the real-A figure"
    );
    // An inverting gain −G has β = 1/(1 + G): −9 gives the same β as +10.
    let inv =
        datasheet::ro_from_closed_loop(0.5, 800.0, TestCircuit::Inverting(9.0), a0, gbw, None)
            .unwrap();
    assert!(close(inv, ro, 1e-12));
    let e =
        datasheet::ro_from_closed_loop(0.5, 800.0, TestCircuit::NonInverting(0.5), a0, gbw, None)
            .unwrap_err();
    assert_eq!(e.field, "zout.gain");
}

#[test]
fn two_spot_noise_densities_give_white_level_and_corner() {
    // Chosen model: e_n = 10 nV/√Hz, f_c = 100 Hz; e(f) = e_n·√(1 + f_c/f)
    // at 10 Hz is √11·10 nV and at 1 kHz √1.1·10 nV (closed form).
    let en = 10e-9;
    let fc = 100.0;
    let e = |f: f64| en * (1.0 + fc / f).sqrt();
    let n = datasheet::noise_from_spots("vnoise", (10.0, e(10.0)), (1000.0, e(1000.0))).unwrap();
    assert!(close(n.white, en, 1e-9), "white {}", n.white);
    assert!(close(n.corner.unwrap(), fc, 1e-9), "corner {:?}", n.corner);
    // The order the spots are given in does not matter.
    let m = datasheet::noise_from_spots("vnoise", (1000.0, e(1000.0)), (10.0, e(10.0))).unwrap();
    assert_eq!(n, m);
    // A flat density is white: no corner.
    let w = datasheet::noise_from_spots("inoise", (10.0, 1e-15), (1e4, 1e-15)).unwrap();
    assert_eq!(w.corner, None);
    // A density plus a known corner: e_n = e/√(1 + f_c/f).
    let s = datasheet::noise_from_spot_and_corner("vnoise", 10.0, e(10.0), fc).unwrap();
    assert!(close(s.white, en, 1e-12));
}

#[test]
fn noise_spots_the_model_cannot_follow_are_refused() {
    // Rising with frequency.
    let e = datasheet::noise_from_spots("vnoise", (10.0, 5e-9), (1000.0, 8e-9)).unwrap_err();
    assert!(e.message.contains("only falls"), "{}", e.message);
    // Falling faster than 1/f power (power ratio 100 over one decade).
    let e = datasheet::noise_from_spots("inoise", (10.0, 10e-15), (100.0, 1e-15)).unwrap_err();
    assert!(e.message.contains("faster than 1/f"), "{}", e.message);
    assert_eq!(e.field, "inoise");
}

#[test]
fn input_capacitance_per_pin_is_common_mode_plus_differential() {
    // Common practice: cin per pin = C_cm + C_diff.
    assert!(close(datasheet::cin_per_pin(3e-12, 2e-12), 5e-12, 1e-12));
}

#[test]
fn output_levels_give_the_distance_to_each_rail() {
    // ±15 V supply, −13.5 V … +14 V at the load: 1.5 V and 1 V from the rails.
    let (n, p) = datasheet::swing_from_levels(-13.5, 14.0, (-15.0, 15.0)).unwrap();
    assert!((n - 1.5).abs() < 1e-12 && (p - 1.0).abs() < 1e-12);
    assert!(datasheet::swing_from_levels(-16.0, 14.0, (-15.0, 15.0)).is_err());
}

#[test]
fn gain_in_db_is_twenty_log() {
    // Textbook: 100 dB = 1e5.
    assert!(close(datasheet::a0_from_db(100.0), 1.0e5, 1e-12));
}
