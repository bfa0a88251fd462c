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
            format!(
                "the two spot densities are at the same frequency ({f1} Hz): give two frequencies"
            ),
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
pub fn noise_from_spot_and_corner(
    field: &str,
    f: f64,
    e: f64,
    corner: f64,
) -> Result<Noise, Problem> {
    positive(field, f)?;
    positive(field, e)?;
    if !(corner.is_finite() && corner >= 0.0) {
        return Err(Problem::new(
            field,
            format!("a 1/f corner is 0 Hz or more, not {corner}"),
        ));
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
pub fn swing_from_levels(low: f64, high: f64, supply: (f64, f64)) -> Result<(f64, f64), Problem> {
    let (neg, pos) = supply;
    if neg.is_nan() || pos.is_nan() || neg >= pos {
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
        Err(Problem::new(
            field,
            format!("{x} must be a positive number"),
        ))
    }
}

// ---------------------------------------------------------------------
// The datasheet-figures file (README "Amplifier models from datasheet
// figures") and the whole derivation of an `amp` block from it.

use crate::model::scenario::Amp;
use crate::model::values::{fmt_eng_sig, parse_value};
use serde::{Deserialize, Deserializer};

/// A number as a file writes it: bare (`110`, `2.5e6`) or in SI or RKM
/// notation (`"2.5M"`, `"4n7"`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Num(pub f64);

impl<'de> Deserialize<'de> for Num {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Num, D::Error> {
        #[derive(Deserialize)]
        #[serde(untagged)]
        enum Written {
            Number(f64),
            Text(String),
        }
        match Written::deserialize(d)? {
            Written::Number(v) => Ok(Num(v)),
            Written::Text(t) => parse_value(&t)
                .map(Num)
                .map_err(|e| serde::de::Error::custom(e.to_string())),
        }
    }
}

/// Which of a typical and a maximum figure to copy.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Deserialize)]
pub enum Take {
    #[default]
    Typical,
    Maximum,
}

/// A figure printed as typical and/or maximum.
#[derive(Debug, Clone, Copy, PartialEq, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TypMax {
    #[serde(default)]
    pub typ: Option<Num>,
    #[serde(default)]
    pub max: Option<Num>,
}

/// The circuit of the closed-loop output impedance figure.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
pub enum Circuit {
    NonInverting,
    Inverting,
}

/// The closed-loop output impedance at a frequency in the datasheet's
/// test circuit (`gain`: G for a non-inverting gain G, G for an
/// inverting gain −G).
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Zout {
    pub ohms: Num,
    pub at: Num,
    pub gain: Num,
    pub circuit: Circuit,
}

/// A noise density as the datasheet gives it: two spot values
/// `spots: [(f1, e1), (f2, e2)]`, or one `density` `at` a frequency with a
/// `corner`, or the `white` level with an optional `corner`.
#[derive(Debug, Clone, PartialEq, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct NoiseFigures {
    #[serde(default)]
    pub spots: Option<Vec<(Num, Num)>>,
    #[serde(default)]
    pub density: Option<Num>,
    #[serde(default)]
    pub at: Option<Num>,
    #[serde(default)]
    pub white: Option<Num>,
    #[serde(default)]
    pub corner: Option<Num>,
}

/// How close the output gets to the rails at a load: given as the
/// distances (`neg`, `pos`), or as the output levels (`low`, `high`) with
/// the `supply` they were measured on.
#[derive(Debug, Clone, Copy, PartialEq, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SwingFigures {
    #[serde(default)]
    pub neg: Option<Num>,
    #[serde(default)]
    pub pos: Option<Num>,
    #[serde(default)]
    pub low: Option<Num>,
    #[serde(default)]
    pub high: Option<Num>,
    #[serde(default)]
    pub supply: Option<(Num, Num)>,
    /// The load the swing is given at (Ω).
    #[serde(default)]
    pub load: Option<Num>,
}

/// Where the input common-mode range ends inside each rail (V).
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RangeFigures {
    pub neg: Num,
    pub pos: Num,
}

/// A rejection ratio (CMRR or PSRR) as a datasheet prints it: the
/// guaranteed minimum and/or the typical figure (dB), and optionally the
/// frequency above which it falls at 20 dB/decade (Hz).
#[derive(Debug, Clone, Copy, PartialEq, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RejectionFigures {
    #[serde(default)]
    pub min: Option<Num>,
    #[serde(default)]
    pub typ: Option<Num>,
    #[serde(default)]
    pub corner: Option<Num>,
}

/// The figures of one amplifier as a datasheet prints them.
#[derive(Debug, Clone, PartialEq, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Figures {
    /// A name for the comment (invented names only in shipped files).
    #[serde(default)]
    pub part: Option<String>,
    #[serde(default)]
    pub take: Take,
    #[serde(default)]
    pub gain_db: Option<Num>,
    #[serde(default)]
    pub a0: Option<Num>,
    #[serde(default)]
    pub gbw: Option<Num>,
    /// The unity-gain crossing f_u (Hz).
    #[serde(default)]
    pub unity: Option<Num>,
    /// Degrees, at the unity-gain crossing.
    #[serde(default)]
    pub phase_margin: Option<Num>,
    #[serde(default)]
    pub fp2: Option<Num>,
    #[serde(default)]
    pub ro: Option<Num>,
    #[serde(default)]
    pub zout: Option<Zout>,
    #[serde(default)]
    pub rin: Option<Num>,
    #[serde(default)]
    pub cin: Option<Num>,
    #[serde(default)]
    pub cin_cm: Option<Num>,
    #[serde(default)]
    pub cin_diff: Option<Num>,
    #[serde(default)]
    pub vnoise: Option<NoiseFigures>,
    #[serde(default)]
    pub inoise: Option<NoiseFigures>,
    #[serde(default)]
    pub swing: Option<SwingFigures>,
    #[serde(default)]
    pub input_range: Option<RangeFigures>,
    #[serde(default)]
    pub slew: Option<TypMax>,
    #[serde(default)]
    pub vos: Option<TypMax>,
    #[serde(default)]
    pub vos_drift: Option<TypMax>,
    #[serde(default)]
    pub ib: Option<TypMax>,
    #[serde(default)]
    pub ios: Option<TypMax>,
    #[serde(default)]
    pub iout: Option<TypMax>,
    /// Common-mode rejection (dB), as `amp.cmrr_db` and `amp.cmrr_corner`.
    #[serde(default)]
    pub cmrr: Option<RejectionFigures>,
    /// Supply rejection (dB), as `amp.psrr_db` and `amp.psrr_corner`.
    #[serde(default)]
    pub psrr: Option<RejectionFigures>,
}

/// One value of the derived `amp` block and how it was found.
#[derive(Debug, Clone, PartialEq)]
pub struct Derived {
    /// The `amp` field (`fp2`).
    pub field: &'static str,
    pub value: f64,
    /// The formula and its inputs, for the comment beside the value.
    pub how: String,
}

/// The whole derivation: the model and each value's note.
#[derive(Debug, Clone, PartialEq)]
pub struct Derivation {
    pub amp: Amp,
    pub values: Vec<Derived>,
    /// Which of gbw and f_u the figures gave.
    pub given: &'static str,
}

fn hz(x: f64) -> String {
    fmt_eng_sig(x, "Hz", 5)
}

fn need<T: Copy>(field: &str, v: Option<T>, what: &str) -> Result<T, Problem> {
    v.ok_or_else(|| Problem::new(field, format!("missing: {what}")))
}

fn one_of(
    field_a: &str,
    a: Option<Num>,
    field_b: &str,
    b: Option<Num>,
) -> Result<Option<(bool, f64)>, Problem> {
    match (a, b) {
        (Some(_), Some(_)) => Err(Problem::new(
            field_b,
            format!("give `{field_a}` or `{field_b}`, not both"),
        )),
        (Some(x), None) => Ok(Some((true, x.0))),
        (None, Some(x)) => Ok(Some((false, x.0))),
        (None, None) => Ok(None),
    }
}

/// A noise figure → white level and corner, with the note.
fn noise(field: &'static str, n: &NoiseFigures, unit: &str) -> Result<(Noise, String), Problem> {
    let d = |x: f64| fmt_eng_sig(x, unit, 4);
    match (&n.spots, n.density, n.white) {
        (Some(spots), None, None) if n.corner.is_none() && n.at.is_none() => {
            let [(fa, ea), (fb, eb)] = spots.as_slice() else {
                return Err(Problem::new(field, format!("`spots` takes two (frequency, density) pairs, not {}", spots.len())));
            };
            let r = noise_from_spots(field, (fa.0, ea.0), (fb.0, eb.0))?;
            Ok((
                r,
                format!(
                    "from e(f)² = e_n²(1 + f_c/f) through {} at {} and {} at {}",
                    d(ea.0),
                    hz(fa.0),
                    d(eb.0),
                    hz(fb.0)
                ),
            ))
        }
        (None, Some(e), None) => {
            let f = need(field, n.at, "`at`, the frequency of the density")?;
            let fc = need(field, n.corner, "`corner`, the 1/f corner")?;
            let r = noise_from_spot_and_corner(field, f.0, e.0, fc.0)?;
            Ok((r, format!("e_n = e/√(1 + f_c/f): e = {} at {}, f_c = {}", d(e.0), hz(f.0), hz(fc.0))))
        }
        (None, None, Some(w)) if n.at.is_none() => {
            positive(field, w.0)?;
            if let Some(fc) = n.corner {
                if !(fc.0.is_finite() && fc.0 >= 0.0) {
                    return Err(Problem::new(field, format!("a 1/f corner is 0 Hz or more, not {}", fc.0)));
                }
            }
            let r = Noise {
                white: w.0,
                corner: n.corner.map(|c| c.0).filter(|c| *c > 0.0),
            };
            Ok((r, "the white density and corner as given".into()))
        }
        _ => Err(Problem::new(
            field,
            "give `spots: [(f1, e1), (f2, e2)]`, or `density` with `at` and `corner`, or `white` (and `corner`)",
        )),
    }
}

/// A typical or maximum figure as `take` says, falling back to the
/// other when only that one is given.
fn typmax(field: &'static str, t: TypMax, take: Take) -> Result<(f64, String), Problem> {
    let (first, second, a, b) = match take {
        Take::Typical => (t.typ, t.max, "typical", "maximum"),
        Take::Maximum => (t.max, t.typ, "maximum", "typical"),
    };
    match (first, second) {
        (Some(x), _) => Ok((x.0, format!("{a}, as given"))),
        (None, Some(x)) => Ok((x.0, format!("{b} as given (no {a} figure)"))),
        (None, None) => Err(Problem::new(field, "give `typ` or `max`")),
    }
}

/// A figure copied as typical or maximum (as the file asks), recorded
/// with how it was read.
fn copied(
    out: &mut Vec<Derived>,
    field: &'static str,
    t: Option<TypMax>,
    take: Take,
) -> Result<Option<f64>, Problem> {
    let Some(t) = t else {
        return Ok(None);
    };
    let (x, how) = typmax(field, t, take)?;
    out.push(Derived {
        field,
        value: x,
        how,
    });
    Ok(Some(x))
}

/// Record one derived value with its formula and inputs.
fn put(out: &mut Vec<Derived>, field: &'static str, value: f64, how: impl Into<String>) {
    out.push(Derived {
        field,
        value,
        how: how.into(),
    });
}

/// The open-loop gain: `gain_db` or `a0` → a0.
fn derive_a0(f: &Figures, out: &mut Vec<Derived>) -> Result<f64, Problem> {
    match one_of("gain_db", f.gain_db, "a0", f.a0)? {
        Some((true, db)) => {
            let a0 = a0_from_db(db);
            put(out, "a0", a0, format!("10^(dB/20): open-loop gain {db} dB"));
            Ok(a0)
        }
        Some((false, a0)) => {
            put(out, "a0", a0, "as given");
            Ok(a0)
        }
        None => Err(Problem::new(
            "gain_db",
            "missing: the open-loop gain (`gain_db` or `a0`)",
        )),
    }
}

/// The gain-bandwidth and second pole: `gbw` or `unity`, with
/// `phase_margin` or `fp2` → gbw, fp2, and which of gbw and f_u was given.
fn derive_poles(
    f: &Figures,
    out: &mut Vec<Derived>,
) -> Result<(f64, Option<f64>, &'static str), Problem> {
    let pm = f.phase_margin.map(|p| p.0);
    let crossing = one_of("gbw", f.gbw, "unity", f.unity)?;
    let Some((gbw_given, freq)) = crossing else {
        return Err(Problem::new(
            "gbw",
            "missing: the gain-bandwidth `gbw` or the unity-gain frequency `unity`",
        ));
    };
    if pm.is_some() && f.fp2.is_some() {
        return Err(Problem::new(
            "fp2",
            "give `phase_margin` or `fp2`, not both",
        ));
    }
    let given = if gbw_given { "gbw" } else { "f_u" };
    let Some(pm) = pm else {
        let how = if gbw_given {
            "as given (gbw given)".to_string()
        } else {
            format!("= f_u = {} given (one pole: gbw = f_u)", hz(freq))
        };
        put(out, "gbw", freq, how);
        if let Some(p2) = f.fp2 {
            put(out, "fp2", p2.0, "as given");
        }
        return Ok((freq, f.fp2.map(|p| p.0), given));
    };
    let p = if gbw_given {
        poles_from_gbw(freq, pm)?
    } else {
        poles_from_crossing(freq, pm)?
    };
    let gbw_how = if gbw_given {
        format!(
            "as given (gbw given; crossing f_u = gbw·sin PM = {})",
            hz(p.f_u)
        )
    } else {
        format!(
            "f_u·√(1 + (f_u/fp2)²): f_u = {} given, fp2 = {}",
            hz(freq),
            hz(p.fp2)
        )
    };
    put(out, "gbw", p.gbw, gbw_how);
    put(
        out,
        "fp2",
        p.fp2,
        format!("f_u/tan(90° − PM): f_u = {}, PM = {pm}°", hz(p.f_u)),
    );
    Ok((p.gbw, Some(p.fp2), given))
}

/// The input resistance and capacitance: `rin`; `cin` or `cin_cm` and
/// `cin_diff` → cin per pin.
fn derive_inputs(
    f: &Figures,
    out: &mut Vec<Derived>,
) -> Result<(Option<f64>, Option<f64>), Problem> {
    let rin = f.rin.map(|r| r.0);
    if let Some(r) = rin {
        put(out, "rin", r, "as given");
    }
    let split = f.cin_cm.or(f.cin_diff).map(|_| (f.cin_cm, f.cin_diff));
    let cin = match (f.cin, split) {
        (Some(_), Some(_)) => {
            return Err(Problem::new(
                "cin",
                "give `cin` or `cin_cm` and `cin_diff`, not both",
            ))
        }
        (Some(c), None) => {
            put(out, "cin", c.0, "as given");
            Some(c.0)
        }
        (None, Some((cm, diff))) => {
            let (cm, diff) = (cm.map_or(0.0, |c| c.0), diff.map_or(0.0, |c| c.0));
            let c = cin_per_pin(cm, diff);
            put(
                out,
                "cin",
                c,
                format!(
                    "per pin C_cm + C_diff (common practice; exact with the other input at AC ground): {} + {}",
                    fmt_eng_sig(cm, "F", 4),
                    fmt_eng_sig(diff, "F", 4)
                ),
            );
            Some(c)
        }
        (None, None) => None,
    };
    Ok((rin, cin))
}

/// The output resistance: `ro`, or `zout` in its test circuit with the
/// model's complex A(jf) → ro.
fn derive_ro(
    f: &Figures,
    (a0, gbw, fp2): (f64, f64, Option<f64>),
    out: &mut Vec<Derived>,
) -> Result<f64, Problem> {
    match (f.ro, f.zout) {
        (Some(_), Some(_)) => Err(Problem::new("zout", "give `ro` or `zout`, not both")),
        (Some(r), None) => {
            put(out, "ro", r.0, "as given");
            Ok(r.0)
        }
        (None, Some(z)) => {
            let circuit = match z.circuit {
                Circuit::NonInverting => TestCircuit::NonInverting(z.gain.0),
                Circuit::Inverting => TestCircuit::Inverting(z.gain.0),
            };
            let beta = circuit.beta()?;
            let ro = ro_from_closed_loop(z.ohms.0, z.at.0, circuit, a0, gbw, fp2)?;
            put(
                out,
                "ro",
                ro,
                format!(
                    "|Z_cl|·|1 + A(jf)·β| with the model's complex A: |Z_cl| = {} at {}, β = {} ({:?} gain {})",
                    fmt_eng_sig(z.ohms.0, "Ω", 4),
                    hz(z.at.0),
                    crate::model::values::fmt_plain(beta, 4),
                    z.circuit,
                    z.gain.0
                ),
            );
            Ok(ro)
        }
        (None, None) => Err(Problem::new("ro", "missing: `ro`, or `zout` (the closed-loop output impedance at a frequency in a test circuit)")),
    }
}

/// The voltage and current noise (both required) → white levels and
/// corners.
fn derive_noise(f: &Figures, out: &mut Vec<Derived>) -> Result<(Noise, Noise), Problem> {
    let mut one = |field: &'static str,
                   corner: &'static str,
                   n: Option<&NoiseFigures>,
                   what: &str,
                   unit: &str| {
        let n = n.ok_or_else(|| Problem::new(field, format!("missing: the {what} `{field}`")))?;
        let (r, how) = noise(field, n, unit)?;
        put(out, field, r.white, how.clone());
        if let Some(c) = r.corner {
            put(out, corner, c, how);
        }
        Ok::<Noise, Problem>(r)
    };
    let v = one(
        "vnoise",
        "vnoise_corner",
        f.vnoise.as_ref(),
        "voltage noise",
        "V/√Hz",
    )?;
    let i = one(
        "inoise",
        "inoise_corner",
        f.inoise.as_ref(),
        "current noise",
        "A/√Hz",
    )?;
    Ok((v, i))
}

/// The output swing at a load → swing_neg, swing_pos and swing_load.
#[allow(clippy::type_complexity)]
fn derive_swing(
    f: &Figures,
    out: &mut Vec<Derived>,
) -> Result<(Option<f64>, Option<f64>, Option<f64>), Problem> {
    let Some(s) = f.swing else {
        return Ok((None, None, None));
    };
    let load = s
        .load
        .map(|l| format!(" at a {} load (swing_load)", fmt_eng_sig(l.0, "Ω", 4)))
        .unwrap_or_else(|| " (no load given)".into());
    if let Some(l) = s.load {
        put(
            out,
            "swing_load",
            l.0,
            "as given: the load the swing was specified into, returned to mid-supply",
        );
    }
    let (n, p, how) =
        match (s.neg, s.pos, s.low, s.high, s.supply) {
            (Some(n), Some(p), None, None, None) => (n.0, p.0, format!("as given{load}")),
            (None, None, Some(lo), Some(hi), Some((sn, sp))) => {
                let (n, p) = swing_from_levels(lo.0, hi.0, (sn.0, sp.0))?;
                (
                    n,
                    p,
                    format!(
                        "rail − level: output {} V … {} V on {} V … {} V{load}",
                        lo.0, hi.0, sn.0, sp.0
                    ),
                )
            }
            _ => return Err(Problem::new(
                "swing",
                "give `neg` and `pos` (the distance to each rail), or `low`, `high` and `supply`",
            )),
        };
    put(out, "swing_neg", n, how.clone());
    put(out, "swing_pos", p, how);
    Ok((Some(n), Some(p), s.load.map(|l| l.0)))
}

/// The input common-mode range → cm_neg and cm_pos.
fn derive_input_range(f: &Figures, out: &mut Vec<Derived>) -> (Option<f64>, Option<f64>) {
    let Some(r) = f.input_range else {
        return (None, None);
    };
    put(
        out,
        "cm_neg",
        r.neg.0,
        "as given (inside the negative rail)",
    );
    put(
        out,
        "cm_pos",
        r.pos.0,
        "as given (inside the positive rail)",
    );
    (Some(r.neg.0), Some(r.pos.0))
}

/// A rejection ratio's dB figure and corner: with `take: Typical` the
/// typical figure (the minimum when only it is given); with `Maximum`
/// (the worst-case figures) the guaranteed minimum, as a rejection's
/// worst case is its lowest.
fn derive_rejection(
    name: &'static str,
    r: Option<RejectionFigures>,
    take: Take,
    out: &mut Vec<Derived>,
) -> Result<(Option<f64>, Option<f64>), Problem> {
    let Some(r) = r else {
        return Ok((None, None));
    };
    let (db_field, corner_field) = match name {
        "cmrr" => ("cmrr_db", "cmrr_corner"),
        _ => ("psrr_db", "psrr_corner"),
    };
    let (first, second, a, b) = match take {
        Take::Typical => (r.typ, r.min, "typical", "minimum"),
        Take::Maximum => (r.min, r.typ, "minimum (the worst case)", "typical"),
    };
    let (db, how) = match (first, second) {
        (Some(x), _) => (x.0, format!("{a}, as given")),
        (None, Some(x)) => (x.0, format!("{b} as given (no {a} figure)")),
        (None, None) => return Err(Problem::new(name, "give `min` or `typ` (dB)")),
    };
    put(out, db_field, db, how);
    if let Some(c) = r.corner {
        put(
            out,
            corner_field,
            c.0,
            "as given (falls at 20 dB/decade above)",
        );
    }
    Ok((Some(db), r.corner.map(|c| c.0)))
}

/// The `amp` fields in the scenario's order (the block prints in it).
const ORDER: [&str; 25] = [
    "a0",
    "gbw",
    "fp2",
    "rin",
    "cin",
    "ro",
    "vnoise",
    "vnoise_corner",
    "inoise",
    "inoise_corner",
    "vos",
    "vos_drift",
    "ib",
    "ios",
    "slew",
    "swing_neg",
    "swing_pos",
    "swing_load",
    "cm_neg",
    "cm_pos",
    "iout",
    "cmrr_db",
    "cmrr_corner",
    "psrr_db",
    "psrr_corner",
];

/// Derive the `amp` block from datasheet figures: each group of figures
/// by its own function, in the order the messages are checked.
pub fn derive(f: &Figures) -> Result<Derivation, Problem> {
    let mut out = Vec::new();
    let a0 = derive_a0(f, &mut out)?;
    let (gbw, fp2, given) = derive_poles(f, &mut out)?;
    if !(a0.is_finite() && a0 > 1.0) {
        return Err(Problem::new(
            if f.a0.is_some() { "a0" } else { "gain_db" },
            format!("an open-loop gain of {a0} is not above 1"),
        ));
    }
    let (rin, cin) = derive_inputs(f, &mut out)?;
    let ro = derive_ro(f, (a0, gbw, fp2), &mut out)?;
    let (v, i) = derive_noise(f, &mut out)?;
    let vos = copied(&mut out, "vos", f.vos, f.take)?;
    let vos_drift = copied(&mut out, "vos_drift", f.vos_drift, f.take)?;
    let ib = copied(&mut out, "ib", f.ib, f.take)?;
    let ios = copied(&mut out, "ios", f.ios, f.take)?;
    let slew = copied(&mut out, "slew", f.slew, f.take)?;
    let (swing_neg, swing_pos, swing_load) = derive_swing(f, &mut out)?;
    let (cm_neg, cm_pos) = derive_input_range(f, &mut out);
    let iout = copied(&mut out, "iout", f.iout, f.take)?;
    let (cmrr_db, cmrr_corner) = derive_rejection("cmrr", f.cmrr, f.take, &mut out)?;
    let (psrr_db, psrr_corner) = derive_rejection("psrr", f.psrr, f.take, &mut out)?;
    let amp = Amp {
        a0,
        gbw,
        fp2,
        rin,
        cin,
        ro,
        vnoise: v.white,
        vnoise_corner: v.corner,
        inoise: i.white,
        inoise_corner: i.corner,
        vos,
        vos_drift,
        ib,
        ios,
        slew,
        swing_neg,
        swing_pos,
        swing_load,
        cm_neg,
        cm_pos,
        iout,
        cmrr_db,
        cmrr_corner,
        psrr_db,
        psrr_corner,
        gbw_tc: None,
        ib_doubling: None,
    };
    out.sort_by_key(|d| ORDER.iter().position(|o| *o == d.field));
    Ok(Derivation {
        amp,
        values: out,
        given,
    })
}
