//! From the figures a datasheet prints to the amplifier model's values.
//! Pure functions: no files, no terminal. Each returns the value, or a
//! plain message saying why the figures cannot be reconciled with the
//! model (a [`Problem`] naming the figure).
//!
//! The model (README "The amplifier model"): A(s) = a0 / ((1 + s/ωp1)(1 +
//! s/ωp2)) with fp1 = gbw/a0, an optional second pole fp2, an output
//! resistance ro behind the controlled source, and noise densities
//! e(f)² = e_n²(1 + f_c/f).

use num_complex::Complex64;

/// A figure that cannot be turned into the model, and why.
#[derive(Debug, Clone, PartialEq)]
pub struct Problem {
    /// The figure's field in the datasheet-figures file (`phase_margin`).
    pub field: String,
    pub message: String,
}

impl Problem {
    pub fn new(field: &str, message: impl Into<String>) -> Problem {
        Problem {
            field: field.into(),
            message: message.into(),
        }
    }
}

/// Open-loop gain in dB → the plain ratio a0 = 10^(dB/20).
pub fn a0_from_db(db: f64) -> f64 {
    10f64.powf(db / 20.0)
}

/// The second pole and the gain-bandwidth that give a phase margin.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TwoPole {
    /// The unity-gain crossing the margin is read at (Hz).
    pub f_u: f64,
    /// The second pole (Hz).
    pub fp2: f64,
    /// The gain-bandwidth that puts the crossing at `f_u` (Hz).
    pub gbw: f64,
}

/// Check a phase margin can come from the two-pole model: the single
/// (dominant) pole alone gives 90°, the second pole takes some away.
fn check_margin(pm_deg: f64) -> Result<(), Problem> {
    if !(pm_deg.is_finite() && pm_deg > 0.0) {
        return Err(Problem::new(
            "phase_margin",
            format!(
                "{pm_deg}° is no phase margin of a stable follower: it must be above 0° \
                 (and below 90°)"
            ),
        ));
    }
    if pm_deg >= 90.0 {
        return Err(Problem::new(
            "phase_margin",
            format!(
                "{pm_deg}° is more than the two-pole model can give: the single pole alone \
                 leaves 90°, and a second pole only takes margin away; leave the phase \
                 margin out (no second pole)"
            ),
        ));
    }
    Ok(())
}

/// Phase margin at the unity-gain crossing `f_u` → fp2 and gbw.
/// PM = 90° − atan(f_u/fp2), so fp2 = f_u/tan(90° − PM); and
/// gbw = f_u·√(1 + (f_u/fp2)²) so that |A(j f_u)| = 1.
pub fn poles_from_crossing(f_u: f64, pm_deg: f64) -> Result<TwoPole, Problem> {
    check_margin(pm_deg)?;
    positive("unity", f_u)?;
    let fp2 = f_u / (90.0 - pm_deg).to_radians().tan();
    let gbw = f_u * (1.0 + (f_u / fp2).powi(2)).sqrt();
    Ok(TwoPole { f_u, fp2, gbw })
}

/// Phase margin with the gain-bandwidth given instead of the crossing:
/// from gbw = f_u·√(1 + tan²(90° − PM)) = f_u / sin PM, the crossing is
/// f_u = gbw·sin PM, then fp2 = f_u/tan(90° − PM).
pub fn poles_from_gbw(gbw: f64, pm_deg: f64) -> Result<TwoPole, Problem> {
    check_margin(pm_deg)?;
    positive("gbw", gbw)?;
    let f_u = gbw * pm_deg.to_radians().sin();
    let fp2 = f_u / (90.0 - pm_deg).to_radians().tan();
    Ok(TwoPole { f_u, fp2, gbw })
}

/// The model's open-loop gain A(jf), complex.
pub fn open_loop(a0: f64, gbw: f64, fp2: Option<f64>, f: f64) -> Complex64 {
    let fp1 = gbw / a0;
    let mut den = Complex64::new(1.0, f / fp1);
    if let Some(p2) = fp2 {
        den *= Complex64::new(1.0, f / p2);
    }
    Complex64::new(a0, 0.0) / den
}

/// The datasheet's test circuit for the closed-loop output impedance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TestCircuit {
    /// A non-inverting gain G (≥ 1): β = 1/G.
    NonInverting(f64),
    /// An inverting gain −G (G > 0): β = 1/(1 + G).
    Inverting(f64),
}

impl TestCircuit {
    /// The feedback factor β = rg/(rg + rf) of the circuit.
    pub fn beta(self) -> Result<f64, Problem> {
        match self {
            TestCircuit::NonInverting(g) if g.is_finite() && g >= 1.0 => Ok(1.0 / g),
            TestCircuit::NonInverting(g) => Err(Problem::new(
                "zout.gain",
                format!("a non-inverting gain is 1 or more, not {g}"),
            )),
            TestCircuit::Inverting(g) if g.is_finite() && g > 0.0 => Ok(1.0 / (1.0 + g)),
            TestCircuit::Inverting(g) => Err(Problem::new(
                "zout.gain",
                format!("an inverting gain is given as its size G > 0 (the gain is −G), not {g}"),
            )),
        }
    }
}

/// The closed-loop output impedance |Z_cl| at `f` in a test circuit →
/// ro, from |Z_cl| = ro/|1 + A(jf)·β| with the model's complex A(jf).
pub fn ro_from_closed_loop(
    z_cl: f64,
    f: f64,
    circuit: TestCircuit,
    a0: f64,
    gbw: f64,
    fp2: Option<f64>,
) -> Result<f64, Problem> {
    positive("zout.ohms", z_cl)?;
    positive("zout.at", f)?;
    let beta = circuit.beta()?;
    let a = open_loop(a0, gbw, fp2, f);
    Ok(z_cl * (Complex64::new(1.0, 0.0) + a * beta).norm())
}

/// A noise density's white level and 1/f corner.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Noise {
    /// The white density e_n (per √Hz).
    pub white: f64,
    /// The 1/f corner f_c (Hz); `None` when the density is white.
    pub corner: Option<f64>,
}

/// Two spot densities `(f1, e1)` and `(f2, e2)` → e_n and f_c from
/// e(f)² = e_n²(1 + f_c/f). With r = e1²/e2² (f1 < f2):
/// f_c = (r − 1)/(1/f1 − r/f2), e_n² = e2²/(1 + f_c/f2).
/// `field` names the figure in messages (`vnoise`, `inoise`).
pub fn noise_from_spots(field: &str, a: (f64, f64), b: (f64, f64)) -> Result<Noise, Problem> {
    for (f, e) in [a, b] {
        positive(field, f)?;
        positive(field, e)?;
    }
    let ((f1, e1), (f2, e2)) = if a.0 <= b.0 { (a, b) } else { (b, a) };
    if f1 == f2 {
        return Err(Problem::new(
            field,
            format!("the two spot densities are at the same frequency ({f1} Hz): give two frequencies"),
        ));
    }
    let r = (e1 / e2).powi(2);
    if r < 1.0 {
        return Err(Problem::new(
            field,
            format!(
                "the density is lower at {f1} Hz than at {f2} Hz: the model's density only \
                 falls with frequency (white plus 1/f)"
            ),
        ));
    }
    if r >= f2 / f1 {
        return Err(Problem::new(
            field,
            format!(
                "the density falls faster than 1/f between {f1} Hz and {f2} Hz (power ratio \
                 {r:.4} ≥ frequency ratio {:.4}): no white level and corner give it",
                f2 / f1
            ),
        ));
    }
    let corner = (r - 1.0) / (1.0 / f1 - r / f2);
    let white = e2 / (1.0 + corner / f2).sqrt();
    Ok(Noise {
        white,
        corner: (corner > 0.0).then_some(corner),
    })
}

/// One spot density `e` at `f` and a known 1/f corner → the white level
/// e_n = e/√(1 + f_c/f).
pub fn noise_from_spot_and_corner(field: &str, f: f64, e: f64, corner: f64) -> Result<Noise, Problem> {
    positive(field, f)?;
    positive(field, e)?;
    if !(corner.is_finite() && corner >= 0.0) {
        return Err(Problem::new(field, format!("a 1/f corner is 0 Hz or more, not {corner}")));
    }
    Ok(Noise {
        white: e / (1.0 + corner / f).sqrt(),
        corner: (corner > 0.0).then_some(corner),
    })
}

/// Common-mode and differential input capacitance → the model's cin per
/// pin (each pin to ground): C_cm + C_diff. Common practice; exact when
/// the other input is at AC ground.
pub fn cin_per_pin(c_cm: f64, c_diff: f64) -> f64 {
    c_cm + c_diff
}

/// Output levels reached at a load with a given supply → how close the
/// output gets to each rail (the swing fields): (level_low − neg,
/// pos − level_high).
pub fn swing_from_levels(
    low: f64,
    high: f64,
    supply: (f64, f64),
) -> Result<(f64, f64), Problem> {
    let (neg, pos) = supply;
    if !(neg < pos) {
        return Err(Problem::new(
            "swing.supply",
            format!("the supply's negative rail {neg} V must be below its positive rail {pos} V"),
        ));
    }
    if !(neg <= low && low < high && high <= pos) {
        return Err(Problem::new(
            "swing",
            format!(
                "the output levels {low} V … {high} V must lie inside the supply {neg} V … {pos} V, \
                 low below high"
            ),
        ));
    }
    Ok((low - neg, pos - high))
}

/// The gain-bandwidth (single pole) at which |A(jf)| has a given size:
/// |A| = a0/√(1 + (f/fp1)²) → fp1 = f/√((a0/|A|)² − 1), gbw = a0·fp1.
pub fn gbw_from_gain_at(a0: f64, f: f64, a_mag: f64) -> Result<f64, Problem> {
    positive("gain_at.at", f)?;
    if !(a_mag > 0.0 && a_mag < a0) {
        return Err(Problem::new(
            "gain_at",
            format!("the gain at a frequency must be below the DC gain {a0}, not {a_mag}"),
        ));
    }
    Ok(a0 * f / ((a0 / a_mag).powi(2) - 1.0).sqrt())
}

fn positive(field: &str, x: f64) -> Result<(), Problem> {
    if x.is_finite() && x > 0.0 {
        Ok(())
    } else {
        Err(Problem::new(field, format!("{x} must be a positive number")))
    }
}
