//! Textbook results and the comparisons made against them: relative
//! error, thermal noise, the model's open-loop gain, crossover and phase
//! margin of a closed-form loop gain, the engine's noise transfer.

use loopwright::model::scenario::Scenario;

pub fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

#[track_caller]
pub fn assert_rel(what: &str, got: f64, want: f64, tol: f64) {
    // Shown with --nocapture: the real error, to keep tolerances honest.
    println!("{what}: rel err {:e} (tol {tol:e})", rel(got, want));
    assert!(
        rel(got, want) <= tol,
        "{what}: got {got:e}, want {want:e} (rel err {:e} > {tol:e})",
        rel(got, want)
    );
}

/// Johnson–Nyquist density of r at temp_c, V/√Hz: √(4kTR), k from SI 2019.
pub fn johnson(r: f64, temp_c: f64) -> f64 {
    (4.0 * 1.380649e-23 * (temp_c + 273.15) * r).sqrt()
}

/// The frequency in [lo, hi] where a falling magnitude `mag` crosses 1, by
/// bisection on log f (for closed-form loop gains in the tests).
pub fn unity_crossing(lo: f64, hi: f64, mag: impl Fn(f64) -> f64) -> f64 {
    let (mut lo, mut hi) = (lo, hi);
    for _ in 0..200 {
        let mid = (lo * hi).sqrt();
        if mag(mid) > 1.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    (lo * hi).sqrt()
}

/// The model's open-loop gain A(jf) = a0/((1 + jf/fp1)(1 + jf/fp2)),
/// fp1 = gbw/a0 (the single- or two-pole model of the design notes).
pub fn open_loop(s: &Scenario, f: f64) -> num_complex::Complex64 {
    let one = num_complex::Complex64::new(1.0, 0.0);
    let j = num_complex::Complex64::new(0.0, 1.0);
    let mut d = one + j * f / (s.amp.gbw / s.amp.a0);
    if let Some(fp2) = s.amp.fp2 {
        d *= one + j * f / fp2;
    }
    s.amp.a0 / d
}

/// Phase margin of a closed-form loop gain t(f): 180° + arg T at |T| = 1,
/// with arg T continued from DC by small steps (so no wrap is missed).
/// Returns (crossover Hz, margin degrees).
pub fn closed_form_margin(t: impl Fn(f64) -> num_complex::Complex64) -> (f64, f64) {
    let fc = unity_crossing(1e-3, 1e12, |f| t(f).norm());
    let mut phase = 0.0f64;
    let mut f = 1e-3;
    while f < fc {
        let p = t(f).arg().to_degrees();
        phase = p + 360.0 * ((phase - p) / 360.0).round();
        f *= 1.01;
    }
    let p = t(fc).arg().to_degrees();
    phase = p + 360.0 * ((phase - p) / 360.0).round();
    (fc, 180.0 + phase)
}

/// |transfer| from one noise source (by key) to the output at f: its output
/// density over its own density. The source's density must not be zero.
pub fn noise_transfer(c: &loopwright::engine::Circuit, key: &str, f: f64) -> f64 {
    let k = c
        .net
        .noise
        .iter()
        .position(|n| n.key == key)
        .unwrap_or_else(|| panic!("no noise source {key}"));
    let p = c.eval(f).unwrap();
    (p.noise_psd[k] / c.net.noise[k].density(f)).sqrt()
}
