//! Root and peak refinement on a bracket, phase arithmetic and logarithmic
//! grids: plain numerics the sweep and the step refine their figures with.

use num_complex::Complex64 as C64;

/// Wrap an angle in degrees into (−180, 180].
pub fn principal_deg(d: f64) -> f64 {
    let mut x = d % 360.0;
    if x <= -180.0 {
        x += 360.0;
    } else if x > 180.0 {
        x -= 360.0;
    }
    x
}

/// Phase of z in degrees, principal value in (−180, 180].
pub fn phase_deg(z: C64) -> f64 {
    principal_deg(z.arg().to_degrees())
}

/// arg z unwrapped to the branch nearest `reference` (degrees).
pub fn unwrap_near(z: C64, reference: f64) -> f64 {
    let p = z.arg().to_degrees();
    p + 360.0 * ((reference - p) / 360.0).round()
}

/// Most sweep points, whatever the band (18 decades at 30 per decade fit).
const MAX_SWEEP_POINTS: usize = 2000;

/// `per_decade` log-spaced frequencies from `lo` to `hi` (both ends
/// included; at most [`MAX_SWEEP_POINTS`]).
pub fn log_grid(lo: f64, hi: f64, per_decade: f64) -> Vec<f64> {
    let decades = hi.log10() - lo.log10();
    if !(decades.is_finite() && decades > 0.0) {
        return vec![lo];
    }
    let n = ((decades * per_decade).ceil() as usize).clamp(1, MAX_SWEEP_POINTS);
    (0..=n)
        .map(|i| lo * 10f64.powf(decades * i as f64 / n as f64))
        .collect()
}

/// The bracket around the first sweep point `i` where a condition holds:
/// the point before it, or far below the first point.
pub fn bracket(freqs: impl Fn(usize) -> f64, i: usize) -> (f64, f64) {
    let below = if i == 0 {
        freqs(0) * 1e-3
    } else {
        freqs(i - 1)
    };
    (below, freqs(i))
}

/// Refine a sign change of g(f) between fa and fb on ln f.
pub fn refine_between(fa: f64, fb: f64, g: impl Fn(f64) -> f64) -> f64 {
    refine_root(fa.ln(), fb.ln(), |x| g(x.exp())).exp()
}

/// Find x in [a, b] where g changes sign (g(a), g(b) of opposite signs),
/// on x = ln f, by the Illinois variant of regula falsi.
pub fn refine_root(mut a: f64, mut b: f64, g: impl Fn(f64) -> f64) -> f64 {
    let (mut ga, mut gb) = (g(a), g(b));
    if ga == 0.0 {
        return a;
    }
    if gb == 0.0 {
        return b;
    }
    let mut side = 0;
    for _ in 0..60 {
        let c = if (ga - gb).abs() > 0.0 {
            (a * gb - b * ga) / (gb - ga)
        } else {
            0.5 * (a + b)
        };
        let c = if c.is_finite() && c > a.min(b) && c < a.max(b) {
            c
        } else {
            0.5 * (a + b)
        };
        let gc = g(c);
        if gc == 0.0 || (b - a).abs() < 1e-12 * (1.0 + c.abs()) {
            return c;
        }
        if gc.signum() == gb.signum() {
            b = c;
            gb = gc;
            if side == -1 {
                ga *= 0.5;
            }
            side = -1;
        } else {
            a = c;
            ga = gc;
            if side == 1 {
                gb *= 0.5;
            }
            side = 1;
        }
        if (b - a).abs() < 1e-10 {
            break;
        }
    }
    0.5 * (a + b)
}

/// Maximise g on [a, b] by golden-section search (to 1e-6 in its unit).
pub fn refine_max(a: f64, b: f64, g: impl Fn(f64) -> f64) -> (f64, f64) {
    refine_max_to(a, b, 1e-6, g)
}

/// Maximise g on [a, b] by golden-section search until the bracket is
/// `tol` wide: (where, the maximum).
pub fn refine_max_to(mut a: f64, mut b: f64, tol: f64, g: impl Fn(f64) -> f64) -> (f64, f64) {
    let r = (5f64.sqrt() - 1.0) / 2.0;
    let mut c = b - r * (b - a);
    let mut d = a + r * (b - a);
    let (mut gc, mut gd) = (g(c), g(d));
    while (b - a).abs() > tol {
        if gc > gd {
            b = d;
            d = c;
            gd = gc;
            c = b - r * (b - a);
            gc = g(c);
        } else {
            a = c;
            c = d;
            gc = gd;
            d = a + r * (b - a);
            gd = g(d);
        }
    }
    if gc > gd {
        (c, gc)
    } else {
        (d, gd)
    }
}

/// ∫ S df over [f1, f2] for a density that follows a power law between the
/// end values (exact for white and 1/f stretches).
pub fn segment_integral(f1: f64, s1: f64, f2: f64, s2: f64) -> f64 {
    if s1 <= 0.0 || s2 <= 0.0 {
        return 0.5 * (s1 + s2) * (f2 - f1);
    }
    let l = (f2 / f1).ln();
    let alpha = (s2 / s1).ln() / l;
    let bexp = (alpha + 1.0) * l;
    let factor = if bexp.abs() < 1e-12 {
        1.0
    } else {
        bexp.exp_m1() / bexp
    };
    s1 * f1 * l * factor
}
