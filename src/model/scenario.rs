//! The scenario: one amplifier stage, its op-amp model, source, load and
//! environment, in SI units. Stored as RON; errors name the field, line and
//! column.

use crate::model::eseries::Series;
use crate::model::names::names_of;
use crate::model::values::parse_value;
use serde::{Deserialize, Deserializer, Serialize};
use std::fmt;

/// The newest file-format version this build reads and writes.
pub const FORMAT_VERSION: u32 = 1;

fn default_version() -> u32 {
    FORMAT_VERSION
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Topology {
    NonInverting,
    Inverting,
    Follower,
    Transimpedance,
    Difference,
}

impl Topology {
    /// Every topology, in the order the lists and the workbench give them.
    pub const ALL: [Topology; 5] = [
        Topology::NonInverting,
        Topology::Inverting,
        Topology::Follower,
        Topology::Transimpedance,
        Topology::Difference,
    ];
    /// Their names, as in a stage file.
    pub const NAMES: [&'static str; 5] = names_of!(Topology, 5);

    pub const fn name(self) -> &'static str {
        match self {
            Topology::NonInverting => "NonInverting",
            Topology::Inverting => "Inverting",
            Topology::Follower => "Follower",
            Topology::Transimpedance => "Transimpedance",
            Topology::Difference => "Difference",
        }
    }
}

/// Where the feedback is taken: the amplifier's output pin, or the load
/// terminal after riso (rf from the load, cf from the pin).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum Feedback {
    #[default]
    Pin,
    Load,
}

impl Feedback {
    /// Both, in the workbench's order.
    pub const ALL: [Feedback; 2] = [Feedback::Pin, Feedback::Load];
    /// Their names, as in a stage file.
    pub const NAMES: [&'static str; 2] = names_of!(Feedback, 2);

    pub const fn name(self) -> &'static str {
        match self {
            Feedback::Pin => "Pin",
            Feedback::Load => "Load",
        }
    }

    /// The default (left out of a saved file).
    pub fn is_pin(&self) -> bool {
        *self == Feedback::Pin
    }
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Stage {
    pub topology: Topology,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub rg: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub rf: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cf: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub riso: Option<f64>,
    /// Difference: input 1 to the − pin (Ω).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub r1: Option<f64>,
    /// Difference: the − pin to the feedback point (Ω).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub r2: Option<f64>,
    /// Difference: input 2 to the + pin (Ω).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub r3: Option<f64>,
    /// Difference: the + pin to the reference (Ω).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub r4: Option<f64>,
    /// Difference: across r4 (F).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub c4: Option<f64>,
    /// Where rf takes the feedback (`Pin` when absent).
    #[serde(default, skip_serializing_if = "Feedback::is_pin")]
    pub feedback: Feedback,
    pub series: Series,
    #[serde(deserialize_with = "number")]
    pub tolerance: f64,
    /// Tolerances of named parts (the kind's part names), overriding
    /// `tolerance` (resistors) or `spread.cap_tol` (capacitors):
    /// `part_tolerance: (rf: 0.001)`.
    #[serde(
        default,
        skip_serializing_if = "PartTolerances::is_empty",
        deserialize_with = "part_tolerances"
    )]
    pub part_tolerance: PartTolerances,
    /// The resistors' temperature coefficient bound (±ppm/°C): each
    /// resistor's own coefficient lies within it.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub tc_ppm: Option<f64>,
}

/// Per-part tolerances by part name, in the order written.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PartTolerances(pub Vec<(String, f64)>);

impl PartTolerances {
    pub fn is_empty(&self) -> bool {
        self.0.is_empty()
    }

    /// The tolerance given for a part.
    pub fn get(&self, name: &str) -> Option<f64> {
        self.0.iter().find(|(n, _)| n == name).map(|(_, v)| *v)
    }

    /// Give a part its tolerance (None: take the override away).
    pub fn set(&mut self, name: &str, v: Option<f64>) {
        match (self.0.iter().position(|(n, _)| n == name), v) {
            (Some(i), Some(v)) => self.0[i].1 = v,
            (Some(i), None) => {
                self.0.remove(i);
            }
            (None, Some(v)) => self.0.push((name.to_string(), v)),
            (None, None) => {}
        }
    }
}

/// Written as a block of named numbers, `(rf: 0.001, rg: 0.001)`, like
/// every other block of the file. The names are interned once each (a
/// field name must outlive the serializer), so saving many times does
/// not grow memory.
impl Serialize for PartTolerances {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeStruct;
        let mut st = s.serialize_struct("PartTolerances", self.0.len())?;
        for (name, v) in &self.0 {
            st.serialize_field(interned(name), v)?;
        }
        st.end()
    }
}

/// One `'static` copy of each name ever saved.
fn interned(name: &str) -> &'static str {
    use std::sync::{Mutex, OnceLock};
    static NAMES: OnceLock<Mutex<Vec<&'static str>>> = OnceLock::new();
    let mut names = NAMES
        .get_or_init(Default::default)
        .lock()
        .unwrap_or_else(|e| e.into_inner());
    if let Some(n) = names.iter().find(|n| **n == name) {
        return n;
    }
    let n: &'static str = Box::leak(name.to_string().into_boxed_str());
    names.push(n);
    n
}

fn part_tolerances<'de, D: Deserializer<'de>>(d: D) -> Result<PartTolerances, D::Error> {
    struct Named;
    impl<'de> serde::de::Visitor<'de> for Named {
        type Value = PartTolerances;
        fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
            f.write_str("part names with tolerances, as (rf: 0.001)")
        }
        fn visit_map<M: serde::de::MapAccess<'de>>(
            self,
            mut m: M,
        ) -> Result<PartTolerances, M::Error> {
            let mut out = PartTolerances::default();
            while let Some((name, v)) = m.next_entry::<String, Written>()? {
                if out.get(&name).is_some() {
                    return Err(serde::de::Error::custom(format!("`{name}` is given twice")));
                }
                out.0.push((name, v.value()?));
            }
            Ok(out)
        }
    }
    d.deserialize_any(Named)
}

#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Amp {
    #[serde(deserialize_with = "number")]
    pub a0: f64,
    #[serde(deserialize_with = "number")]
    pub gbw: f64,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub fp2: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub rin: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cin: Option<f64>,
    #[serde(deserialize_with = "number")]
    pub ro: f64,
    #[serde(deserialize_with = "number")]
    pub vnoise: f64,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub vnoise_corner: Option<f64>,
    #[serde(deserialize_with = "number")]
    pub inoise: f64,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub inoise_corner: Option<f64>,
    /// Input offset voltage magnitude (V), sign unknown, in series with
    /// the + input where the voltage noise sits.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub vos: Option<f64>,
    /// Offset drift magnitude (V/°C) away from 25 °C.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub vos_drift: Option<f64>,
    /// Input bias current (A, signed): positive flows into each pin.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub ib: Option<f64>,
    /// Input offset current magnitude |ib+ − ib−| (A), sign unknown.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub ios: Option<f64>,
    /// °C per doubling of ib and ios from 25 °C (absent: constant).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub ib_doubling: Option<f64>,
    /// Slew rate (V/s); absent or 0 = no limit.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub slew: Option<f64>,
    /// How close the internal output gets to the negative / positive rail (V).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub swing_neg: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub swing_pos: Option<f64>,
    /// The load (Ω, returned to mid-supply) the swing figures were given
    /// at; absent: they bound the internal output behind ro directly.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub swing_load: Option<f64>,
    /// Where the input common-mode range ends inside the negative /
    /// positive rail (V; negative = beyond the rail).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cm_neg: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cm_pos: Option<f64>,
    /// Output current limit magnitude (A); absent or 0 = no limit.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub iout: Option<f64>,
    /// Relative change of gbw per °C away from `temp_c` (absent: none).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub gbw_tc: Option<f64>,
    /// Common-mode rejection at low frequency (dB); absent: infinite. The
    /// error V_cm·10^(−cmrr_db/20)·(1 + s/(2π·cmrr_corner)) sits in series
    /// with the + input, V_cm the average of the two pin voltages.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cmrr_db: Option<f64>,
    /// Where the common-mode rejection starts to fall at 20 dB/decade (Hz);
    /// absent: flat.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cmrr_corner: Option<f64>,
    /// Supply rejection at low frequency (dB), one figure for both rails;
    /// absent: infinite. The error ΔV_supply·10^(−psrr_db/20)·(1 +
    /// s/(2π·psrr_corner)) sits in series with the + input.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub psrr_db: Option<f64>,
    /// Where the supply rejection starts to fall (Hz); absent: flat.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub psrr_corner: Option<f64>,
}

impl Amp {
    /// The range the internal output (behind ro) can reach on a supply:
    /// the rails less `swing_neg`/`swing_pos`. With `swing_load`, the
    /// swing is a datasheet figure at the pin into that load returned to
    /// the middle of the supply, so the internal limit lies further out by
    /// the drop across ro at that load's current.
    pub fn usable_rails(&self, sup: &Supply) -> (f64, f64) {
        let lo = sup.neg + self.swing_neg.unwrap_or(0.0);
        let hi = sup.pos - self.swing_pos.unwrap_or(0.0);
        match self.swing_load.filter(|r| *r > 0.0) {
            Some(rl) => {
                let mid = 0.5 * (sup.neg + sup.pos);
                (
                    lo - self.ro * (mid - lo) / rl,
                    hi + self.ro * (hi - mid) / rl,
                )
            }
            None => (lo, hi),
        }
    }

    /// A bias or offset current at `temp_c`: doubling every `ib_doubling`
    /// °C from 25 °C (halving below), constant without it.
    pub fn current_at_temp(&self, i: f64, temp_c: f64) -> f64 {
        match self.ib_doubling.filter(|d| *d > 0.0) {
            Some(d) => i * 2f64.powf((temp_c - 25.0) / d),
            None => i,
        }
    }
}

#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Source {
    /// The source resistance (Ω; voltage inputs only, where it is needed).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub r: Option<f64>,
    /// DC level of the source EMF (V).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub dc: Option<f64>,
    /// Peak amplitude of the signal at the source EMF (V): the level the
    /// signal limits are checked at.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub peak: Option<f64>,
    /// A current input's photodiode: its capacitance (F) and shunt
    /// resistance (Ω; absent = open) from the − input to its far terminal.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cd: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub rsh: Option<f64>,
    /// A current input's DC current (A, into the − input) and peak signal
    /// current (A).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub idc: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub ipeak: Option<f64>,
    /// The DC level of the diode's far terminal (V; AC ground).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub bias: Option<f64>,
    /// Input 2's source resistance (Ω; absent: equal to `r`): two-input kinds.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub r_plus: Option<f64>,
    /// DC common-mode level (V1 + V2)/2 (V): two-input kinds.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cm: Option<f64>,
    /// Peak common-mode signal anywhere in the band (V): two-input kinds.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cm_peak: Option<f64>,
}

/// The supply rails (V), neg below pos.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Supply {
    #[serde(deserialize_with = "number")]
    pub neg: f64,
    #[serde(deserialize_with = "number")]
    pub pos: f64,
    /// Peak ripple on the supply (V), taken on the supply as a whole.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub ripple: Option<f64>,
    /// The ripple's frequency (Hz); absent: the rejection is read at DC.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub ripple_hz: Option<f64>,
}

impl Default for Supply {
    /// What a rail typed into an absent supply starts from.
    fn default() -> Supply {
        Supply {
            neg: -15.0,
            pos: 15.0,
            ripple: None,
            ripple_hz: None,
        }
    }
}

/// The reference input: the node the ground side of the stage returns to
/// (the + input of an inverting stage, the foot of rg in a non-inverting
/// one), a DC level behind a Thevenin resistance (the mid-rail divider),
/// with an optional bypass capacitor from that node to ground. Absent:
/// ground through 0 Ω.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Reference {
    /// Its DC level (V): the operating point only; ground in every
    /// frequency analysis.
    #[serde(deserialize_with = "number")]
    pub v: f64,
    /// Its Thevenin resistance (Ω; 0 is an ideal level).
    #[serde(default, deserialize_with = "number")]
    pub r: f64,
    /// The bypass capacitor from the reference node (after r) to ground.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub c: Option<f64>,
}

/// The step of the input for the step response: the source EMF's (V,
/// voltage inputs) or the input current's (A, a current input); not zero.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Step {
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub size: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub size_a: Option<f64>,
    /// Settle to half an LSB of this many bits: 2^−(N+1) of the final
    /// value (`settle_to_s`). Not with `settle_to`.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_count")]
    pub settle_bits: Option<u32>,
    /// Settle to this fraction of the final value (`settle_to_s`).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub settle_to: Option<f64>,
}

impl Step {
    /// A step of `size` volts with no settling threshold.
    pub fn of(size: f64) -> Step {
        Step {
            size: Some(size),
            ..Step::default()
        }
    }

    /// The settling threshold as a fraction of the final value:
    /// `settle_to`, or 2^−(bits+1) from `settle_bits`.
    pub fn threshold(&self) -> Option<f64> {
        self.settle_to
            .or_else(|| self.settle_bits.map(|n| 0.5f64.powi(n as i32 + 1)))
    }
}

/// The sampling capacitor of a converter on the load terminal: at t = 0 a
/// switch of resistance `r` connects `c`, charged to `from` volts, to the
/// load terminal (the kick analysis only).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Sample {
    #[serde(deserialize_with = "number")]
    pub c: f64,
    #[serde(deserialize_with = "number")]
    pub r: f64,
    /// The capacitor's voltage before the switch closes (0 V without it).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub from: Option<f64>,
    /// The converter's full-scale range (V) and resolution (bits).
    #[serde(deserialize_with = "number")]
    pub full_scale: f64,
    #[serde(deserialize_with = "count")]
    pub bits: u32,
    /// The acquisition time: when the switch opens again (s).
    #[serde(deserialize_with = "number")]
    pub acquire: f64,
    /// Conversions per second (for the average current's DC error).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub rate: Option<f64>,
}

impl Default for Sample {
    /// What a sampling field typed into an absent block starts from
    /// (a 16-bit converter of our own invention).
    fn default() -> Sample {
        Sample {
            c: 16.0e-12,
            r: 50.0,
            from: None,
            full_scale: 5.0,
            bits: 16,
            acquire: 300.0e-9,
            rate: None,
        }
    }
}

impl Sample {
    /// The capacitor's voltage before the switch closes (V).
    pub fn from_v(&self) -> f64 {
        self.from.unwrap_or(0.0)
    }

    /// One LSB of the converter (V).
    pub fn lsb(&self) -> f64 {
        self.full_scale / 2f64.powi(self.bits as i32)
    }
}

/// How a varied part is drawn within its spread.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum Dist {
    /// Uniform over ±tolerance.
    #[default]
    Uniform,
    /// Normal with tolerance = 3σ, truncated at ±tolerance.
    Normal,
}

impl Dist {
    /// Every distribution, in the workbench's order.
    pub const ALL: [Dist; 2] = [Dist::Uniform, Dist::Normal];
    /// Their names, as in a stage file.
    pub const NAMES: [&'static str; 2] = names_of!(Dist, 2);

    pub const fn name(self) -> &'static str {
        match self {
            Dist::Uniform => "Uniform",
            Dist::Normal => "Normal",
        }
    }
}

/// How the parts of a built stage vary (the resistors within
/// `stage.tolerance`; absent spreads are 0).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Spread {
    #[serde(default)]
    pub dist: Dist,
    /// cf within ±cap_tol (fraction).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cap_tol: Option<f64>,
    /// The gain-bandwidth within ±gbw_tol (fraction).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub gbw_tol: Option<f64>,
    /// The open-loop gain between a0_min and amp.a0.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub a0_min: Option<f64>,
    /// The open-loop output resistance within ±ro_tol (fraction).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub ro_tol: Option<f64>,
    /// A photodiode's capacitance within ±cd_tol (fraction).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cd_tol: Option<f64>,
    /// Monte Carlo trials (2000 without it).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub trials: Option<u32>,
    /// The generator's seed (1 without it).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub seed: Option<u64>,
}

/// Limits a built stage must meet; each present one is checked on the
/// nominal design and on every trial (equal to the limit passes).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Spec {
    /// The gain the error is measured against (the nominal stage's
    /// network gain without it).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub gain_target: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub gain_error_max: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub f_3db_min: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub peaking_max_db: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub pm_min_deg: Option<f64>,
    /// The least CMRR at DC (dB), two-input kinds.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub cmrr_min_db: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub zout_max_ohm: Option<f64>,
    /// Where zout_max_ohm applies (0 or absent: DC).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub zout_at_hz: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub noise_rms_max: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub offset_max_v: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub settle_max_s: Option<f64>,
    /// The sampling capacitor's error at the end of the acquisition, LSB.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub kick_error_max_lsb: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub headroom_min_v: Option<f64>,
    /// The least supply rejection at the ripple's frequency (dB).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub supply_rejection_min_db: Option<f64>,
    /// The fraction of trials that must meet every limit (1 without it).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub yield_min: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Load {
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub r: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number")]
    pub c: Option<f64>,
    /// A converter's sampling capacitor (the kick analysis only).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub sample: Option<Sample>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Scenario {
    #[serde(default = "default_version")]
    pub version: u32,
    pub title: String,
    pub stage: Stage,
    pub amp: Amp,
    pub source: Source,
    pub load: Load,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub supply: Option<Supply>,
    /// The reference input (absent: ground through 0 Ω).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub reference: Option<Reference>,
    /// The step the time-domain analysis applies (10 mV without it).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub step: Option<Step>,
    #[serde(deserialize_with = "number")]
    pub temp_c: f64,
    /// The temperatures the stage must work over (°C, low to high); the
    /// values written are the values at `temp_c`.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    #[serde(deserialize_with = "optional_number_pair")]
    pub temp_range: Option<(f64, f64)>,
    #[serde(deserialize_with = "number_pair")]
    pub band: (f64, f64),
    /// How the parts vary from board to board.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub spread: Option<Spread>,
    /// The limits every board must meet.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub spec: Option<Spec>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub notes: Option<String>,
}

/// A value that is present and non-zero (zero means "absent" for the
/// optional parts such as cf, riso, cin and the noise corners).
pub fn present(v: Option<f64>) -> Option<f64> {
    v.filter(|x| *x != 0.0)
}

/// A problem with one field of a scenario.
#[derive(Debug, Clone, PartialEq)]
pub struct FieldProblem {
    /// Dotted path, e.g. `stage.rg`.
    pub field: String,
    pub message: String,
}

/// A scenario that could not be loaded or is not valid.
#[derive(Debug, Clone, PartialEq)]
pub struct ScenarioError {
    pub file: Option<String>,
    pub field: Option<String>,
    /// 1-based line and column, when the position is known.
    pub line: Option<usize>,
    pub col: Option<usize>,
    pub message: String,
}

impl fmt::Display for ScenarioError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if let Some(file) = &self.file {
            write!(f, "{file}:")?;
        }
        if let (Some(l), Some(c)) = (self.line, self.col) {
            write!(f, "{l}:{c}:")?;
        }
        if self.file.is_some() || self.line.is_some() {
            f.write_str(" ")?;
        }
        if let Some(field) = &self.field {
            write!(f, "field `{field}`: ")?;
        }
        f.write_str(&self.message)
    }
}

impl std::error::Error for ScenarioError {}

/// A present optional value is written bare (`rf: 10000.0`), as the
/// loader reads it; absent ones are skipped.
fn bare<T: Serialize, S: serde::Serializer>(v: &Option<T>, s: S) -> Result<S::Ok, S::Error> {
    match v {
        Some(x) => x.serialize(s),
        None => s.serialize_none(),
    }
}

/// The step without a `step` field, volts.
pub const DEFAULT_STEP_V: f64 = 0.01;
/// A current input's step without `step.size_a`, amperes.
pub const DEFAULT_STEP_A: f64 = 1.0e-6;

/// A number as a file may write it: bare (`19100.0`), or as a designer
/// writes it, in SI or IEC 60062 RKM notation (`"19k1"`, `"4.7n"`, `"10M"`).
#[derive(Deserialize)]
#[serde(untagged)]
enum Written {
    Number(f64),
    Text(String),
}

impl Written {
    fn value<E: serde::de::Error>(self) -> Result<f64, E> {
        match self {
            Written::Number(v) => Ok(v),
            Written::Text(t) => parse_value(&t).map_err(|e| E::custom(e.to_string())),
        }
    }
}

fn number<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
    Written::deserialize(d)?.value()
}

fn optional_number<'de, D: Deserializer<'de>>(d: D) -> Result<Option<f64>, D::Error> {
    Option::<Written>::deserialize(d)?
        .map(Written::value)
        .transpose()
}

/// A whole number (a count of bits) as a file may write it: `16`, `16.0`
/// or `"16"`; a fraction is refused with its value.
fn whole<E: serde::de::Error>(v: f64) -> Result<u32, E> {
    if v.fract() == 0.0 && (0.0..=f64::from(u32::MAX)).contains(&v) {
        Ok(v as u32)
    } else {
        Err(E::custom(format!("{v} is not a whole number")))
    }
}

fn count<'de, D: Deserializer<'de>>(d: D) -> Result<u32, D::Error> {
    whole(Written::deserialize(d)?.value()?)
}

fn optional_count<'de, D: Deserializer<'de>>(d: D) -> Result<Option<u32>, D::Error> {
    Option::<Written>::deserialize(d)?
        .map(|w| w.value().and_then(whole))
        .transpose()
}

fn optional_number_pair<'de, D: Deserializer<'de>>(d: D) -> Result<Option<(f64, f64)>, D::Error> {
    Option::<(Written, Written)>::deserialize(d)?
        .map(|(a, b)| Ok((a.value()?, b.value()?)))
        .transpose()
}

fn number_pair<'de, D: Deserializer<'de>>(d: D) -> Result<(f64, f64), D::Error> {
    let (a, b) = <(Written, Written)>::deserialize(d)?;
    Ok((a.value()?, b.value()?))
}
