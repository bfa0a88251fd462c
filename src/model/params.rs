//! The parameter table: one entry per scenario field, the only place a
//! field's label, unit, group, stepping, presence rule, accepted range and
//! access are written. The workbench pane, typed entry, validation, the A/B
//! differences and the text report all read it.
//!
//! To add a parameter: add the field to the scenario struct, then one entry
//! to [`PARAMS`]. Nothing else needs to know.

use crate::model::eseries::{Series, CAPACITOR_SERIES};
use crate::model::scenario::{
    present, Dist, Feedback, FieldProblem, Reference, Sample, Scenario, Step, Supply, Topology,
};
use crate::model::stages::Input;
use crate::model::values::{fmt_compact, fmt_eng, fmt_eng_sig, fmt_fixed, fmt_plain, parse_value};

/// Where a parameter sits in the pane and the report.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Group {
    Stage,
    Amplifier,
    SourceLoad,
    SupplySignal,
    Environment,
    Spread,
}

impl Group {
    pub fn title(self) -> &'static str {
        match self {
            Group::Stage => "Stage",
            Group::Amplifier => "Amplifier",
            Group::SourceLoad => "Source and load",
            Group::SupplySignal => "Supply and signal",
            Group::Environment => "Environment",
            Group::Spread => "Spread and spec",
        }
    }
}

/// How a value moves when stepped.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Stepping {
    /// A real resistor: along the stage's E-series, crossing decades.
    Resistor,
    /// A capacitor: along E12.
    Capacitor,
    /// A model number: 1-2-5 per decade.
    OneTwoFive,
    /// A fixed additive step.
    Linear(f64),
    /// Along a list of usual values.
    List(&'static [f64]),
    /// One of a fixed set of names.
    Choice,
}

/// Which way a step goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Direction {
    Up,
    Down,
}

/// Whether a field may be absent, and what zero means.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Presence {
    /// Always present.
    Required,
    /// May be absent; zero is not a valid value.
    Optional,
    /// May be absent; zero also means absent.
    ZeroIsAbsent,
    /// Zero is allowed and means something (an ideal source).
    ZeroAllowed,
    /// A part of the stage's kind: shown when the kind has it, needed
    /// when the kind says so (`stages::PartDecl::required`).
    GainStage,
    /// A part of the stage's kind; where the kind does not need it,
    /// absent or zero is a wire.
    FeedbackResistor,
}

/// How a value is shown.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// Engineering notation with the unit, four significant digits.
    Eng,
    /// A tolerance (a fraction) shown as ± a percentage.
    Percent,
    /// A fraction shown as a plain percentage (a yield).
    Share,
    /// A plain ratio with its value in dB.
    RatioDb,
    /// Degrees Celsius.
    Celsius,
}

/// How the value is read and written.
#[derive(Debug, Clone, Copy)]
pub enum Access {
    Number {
        get: fn(&Scenario) -> Option<f64>,
        set: fn(&mut Scenario, Option<f64>),
    },
    Choice {
        names: &'static [&'static str],
        get: fn(&Scenario) -> usize,
        set: fn(&mut Scenario, usize),
    },
}

/// One scenario field.
#[derive(Debug)]
pub struct Param {
    /// Dotted path in the file (`stage.rg`); also the field named in errors.
    pub path: &'static str,
    /// Short name on screen.
    pub label: &'static str,
    pub unit: &'static str,
    pub group: Group,
    pub stepping: Stepping,
    pub presence: Presence,
    /// Accepted range of a present, non-zero value (inclusive).
    pub range: (f64, f64),
    /// Where stepping up from "none" starts.
    pub start: fn(&Scenario) -> f64,
    pub format: Format,
    pub access: Access,
    /// A count or a seed: whole numbers only.
    pub whole: bool,
    /// How to enter it, for the hint line (most parameters need none).
    pub note: Option<&'static str>,
    /// Shown (pane, report, note) only when this holds or the value is
    /// given: a qualifier of other fields (None: always shown).
    pub qualifies: Option<fn(&Scenario) -> bool>,
    /// The kinds of input the field belongs to (refused for the others).
    pub inputs: Inputs,
}

/// Which stages a field belongs to, by the kind of their input.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Inputs {
    Any,
    /// Kinds driven by voltages (one input or a pair).
    Voltage,
    /// Kinds driven by a current.
    Current,
}

impl Inputs {
    /// Whether a stage of this scenario's kind has the field.
    pub fn admit(self, s: &Scenario) -> bool {
        match self {
            Inputs::Any => true,
            Inputs::Voltage => !s.current_input(),
            Inputs::Current => s.current_input(),
        }
    }
}

/// A reference to a table entry; compared by identity of the path.
pub type ParamRef = &'static Param;

impl PartialEq for Param {
    fn eq(&self, other: &Param) -> bool {
        self.path == other.path
    }
}

impl Eq for Param {}

const TOLERANCES: [f64; 9] = [0.0005, 0.001, 0.0025, 0.005, 0.01, 0.02, 0.05, 0.1, 0.2];
const SPREADS: [f64; 8] = [0.01, 0.02, 0.05, 0.1, 0.2, 0.3, 0.5, 0.9];
const ERROR_LIMITS: [f64; 8] = [1e-4, 1e-3, 2e-3, 5e-3, 0.01, 0.02, 0.05, 0.1];
const TEMPCOS: [f64; 8] = [1.0, 2.0, 5.0, 10.0, 25.0, 50.0, 100.0, 200.0];
const YIELDS: [f64; 7] = [0.5, 0.9, 0.95, 0.99, 0.997, 0.999, 1.0];

/// Accepted ranges (README "Accepted ranges").
pub const OHMS: (f64, f64) = (1.0e-3, 1.0e13);
/// The amplifier's open-loop output resistance: wider makes the solve
/// lose digits against milliohm feedback networks.
pub const RO: (f64, f64) = (1.0e-3, 1.0e6);
pub const FARADS: (f64, f64) = (1.0e-15, 1.0);
/// Capacitors inside the stage (feedback, amplifier input): wider makes the
/// solve lose digits against the amplifier's own impedances at high
/// frequency.
pub const STAGE_FARADS: (f64, f64) = (1.0e-15, 1.0e-6);
pub const HERTZ: (f64, f64) = (1.0e-6, 1.0e12);
pub const GBW: (f64, f64) = (1.0, 1.0e11);
pub const A0: (f64, f64) = (1.0, 1.0e9);
pub const VNOISE: (f64, f64) = (1.0e-12, 1.0e-3);
pub const INOISE: (f64, f64) = (1.0e-18, 1.0e-6);
pub const TOLERANCE: (f64, f64) = (1.0e-5, 0.5);
pub const TEMP_C: (f64, f64) = (-273.15, 500.0);
/// A resistor temperature coefficient bound, ppm/°C.
pub const TC_PPM: (f64, f64) = (0.0, 10_000.0);
/// The relative change of gbw per °C.
pub const GBW_TC: (f64, f64) = (-0.05, 0.05);
/// A part's own tolerance (`stage.part_tolerance`): as `stage.tolerance`.
pub const PART_TOLERANCE: (f64, f64) = TOLERANCE;
/// Signal limits (README "Accepted ranges"). A range that starts at 0
/// takes 0 as a plain value; a signed one takes either sign.
pub const VOS: (f64, f64) = (0.0, 1.0);
pub const VOS_DRIFT: (f64, f64) = (0.0, 1.0e-3);
pub const IB: (f64, f64) = (-1.0e-2, 1.0e-2);
pub const IOS: (f64, f64) = (0.0, 1.0e-2);
pub const SLEW: (f64, f64) = (1.0, 1.0e12);
pub const SWING: (f64, f64) = (0.0, 50.0);
/// The load a datasheet's swing figure was given at.
pub const SWING_LOAD: (f64, f64) = (1.0, 1.0e9);
/// °C per doubling of the bias currents.
pub const IB_DOUBLING: (f64, f64) = (1.0, 100.0);
pub const CM: (f64, f64) = (-50.0, 50.0);
pub const IOUT: (f64, f64) = (1.0e-6, 100.0);
pub const VOLTS: (f64, f64) = (-500.0, 500.0);
/// The reference input: its level, its Thevenin resistance (0 = ideal)
/// and its bypass capacitor.
pub const REF_VOLTS: (f64, f64) = (-100.0, 100.0);
pub const REF_OHMS: (f64, f64) = (0.0, 1.0e9);
pub const PEAK: (f64, f64) = (0.0, 500.0);
/// A part's spread (fraction of its value).
pub const SPREAD: (f64, f64) = (0.0, 0.99);
pub const TRIALS: (f64, f64) = (1.0, 1.0e6);
/// Seeds are whole numbers a double holds exactly.
pub const SEED: (f64, f64) = (0.0, 9.007_199_254_740_992e15);
/// A gain in V/V (pairs, a voltage stage's target).
pub const GAIN_TARGET: (f64, f64) = (-1.0e9, 1.0e9);
/// A gain target in V/A (a transimpedance) reaches 1e13; in V/V the
/// cross-check holds it to [`GAIN_TARGET`].
pub const GAIN_TARGET_VA: (f64, f64) = (-1.0e13, 1.0e13);
/// A photodiode's shunt resistance.
pub const RSH: (f64, f64) = (1.0e3, 1.0e12);
/// A current input's DC current and step (A, either sign).
pub const IDC: (f64, f64) = (-1.0e-2, 1.0e-2);
/// A current input's peak (A).
pub const IPEAK: (f64, f64) = (0.0, 1.0);
/// The photodiode's far-terminal level (V).
pub const BIAS: (f64, f64) = (-100.0, 100.0);
pub const FRACTION: (f64, f64) = (0.0, 1.0);
pub const DB_LIMIT: (f64, f64) = (0.0, 100.0);
/// A CMRR minimum (dB).
pub const CMRR_LIMIT: (f64, f64) = (0.0, 200.0);
pub const DEG_LIMIT: (f64, f64) = (0.0, 180.0);
pub const OHM_LIMIT: (f64, f64) = (0.0, 1.0e13);
pub const HZ_AT: (f64, f64) = (0.0, 1.0e12);
pub const SECONDS: (f64, f64) = (0.0, 1.0e3);
pub const RMS_LIMIT: (f64, f64) = (0.0, 1.0e3);
/// The amplifier's common-mode and supply rejection (dB), their corners
/// (Hz), the supply ripple (V peak) and its frequency.
pub const REJECTION_DB: (f64, f64) = (0.0, 200.0);
/// The amplifier's own CMRR: from 20 dB, since a common-mode error of
/// 2/3 of V_cm or more can turn a follower's feedback positive where its
/// pins follow the output together (below 20 dB no amplifier is sold as
/// one; common practice).
pub const AMP_CMRR_DB: (f64, f64) = (20.0, 200.0);
pub const CORNER_HZ: (f64, f64) = (1.0e-3, 1.0e9);
pub const RIPPLE: (f64, f64) = (0.0, 100.0);
/// The widest band, in decades.
pub const MAX_BAND_DECADES: f64 = 15.0;
/// Settling thresholds: half an LSB of 1 to 18 bits, or a fraction down
/// to the step's finest band (1 ppm, `engine::step::SETTLE_FLOOR`).
pub const SETTLE_BITS: (f64, f64) = (1.0, 18.0);
pub const SETTLE_TO: (f64, f64) = (1.0e-6, 0.5);
/// The converter's sampling switch, capacitor, range, resolution,
/// acquisition time and conversion rate.
pub const SWITCH_OHMS: (f64, f64) = (1.0e-3, 1.0e4);
pub const FULL_SCALE: (f64, f64) = (1.0e-3, 1.0e3);
pub const BITS: (f64, f64) = (1.0, 32.0);
pub const ACQUIRE: (f64, f64) = (1.0e-12, 1.0);
pub const RATE: (f64, f64) = (1.0e-3, 1.0e10);
pub const LSB_LIMIT: (f64, f64) = (0.0, 1.0e6);

/// Access to a number of the sampling block (`load.sample.c`): setting a
/// value makes the block; clearing a field the block needs removes it.
macro_rules! sample {
    ($f:ident) => {
        Access::Number {
            get: |s| s.load.sample.map(|x| x.$f),
            set: |s, v| match v {
                Some(x) => s.load.sample.get_or_insert_with(Sample::default).$f = x,
                None => s.load.sample = None,
            },
        }
    };
}

/// Whether the stage has a sampling capacitor (its rows are shown then).
fn sampled(s: &Scenario) -> bool {
    s.load.sample.is_some()
}

/// Whether the step has a settling threshold (its rows are shown then).
fn thresholded(s: &Scenario) -> bool {
    s.step.is_some_and(|x| x.threshold().is_some())
}

/// Access to an `Option<f64>` field (`opt a.b`) or an `f64` one (`req a.b`).
macro_rules! number {
    (opt $($p:tt).+) => {
        Access::Number {
            get: |s| s.$($p).+,
            set: |s, v| s.$($p).+ = v,
        }
    };
    (req $($p:tt).+) => {
        Access::Number {
            get: |s| Some(s.$($p).+),
            set: |s, v| {
                if let Some(x) = v {
                    s.$($p).+ = x
                }
            },
        }
    };
}

/// Access to an optional field of an optional block (`spread.cap_tol`):
/// setting a value makes the block, and a block left with nothing in it
/// goes away.
macro_rules! block {
    ($b:ident . $f:ident) => {
        Access::Number {
            get: |s| s.$b.as_ref().and_then(|b| b.$f),
            set: |s, v| {
                s.$b.get_or_insert_with(Default::default).$f = v;
                tidy(s);
            },
        }
    };
    ($b:ident . $f:ident as $t:ty) => {
        Access::Number {
            get: |s| s.$b.as_ref().and_then(|b| b.$f).map(|x| x as f64),
            set: |s, v| {
                s.$b.get_or_insert_with(Default::default).$f = v.map(|x| x.round() as $t);
                tidy(s);
            },
        }
    };
}

/// Access to an optional field of the supply: a value needs the rails
/// (setting one makes the supply with the usual rails); clearing it keeps
/// them.
macro_rules! supply_field {
    ($f:ident) => {
        Access::Number {
            get: |s| s.supply.and_then(|b| b.$f),
            set: |s, v| match (v, s.supply.as_mut()) {
                (Some(_), _) => s.supply.get_or_insert_with(Supply::default).$f = v,
                (None, Some(b)) => b.$f = None,
                (None, None) => {}
            },
        }
    };
}

/// Whether the stage's kind has two inputs (the common-mode and input 2
/// fields apply).
fn two_inputs(s: &Scenario) -> bool {
    matches!(s.stage.topology.kind().input, Input::Pair { .. })
}

/// Drop a spread or spec block that holds nothing.
fn tidy(s: &mut Scenario) {
    if s.spread.as_ref().is_some_and(|b| *b == Default::default()) {
        s.spread = None;
    }
    if s.spec.as_ref().is_some_and(|b| *b == Default::default()) {
        s.spec = None;
    }
    if s.step.as_ref().is_some_and(|b| *b == Default::default()) {
        s.step = None;
    }
}

/// One table row; the builder methods below set the less common parts.
#[allow(clippy::too_many_arguments)]
const fn entry(
    path: &'static str,
    label: &'static str,
    unit: &'static str,
    group: Group,
    stepping: Stepping,
    presence: Presence,
    range: (f64, f64),
    access: Access,
) -> Param {
    Param {
        path,
        label,
        unit,
        group,
        stepping,
        presence,
        range,
        start: |_| 1.0,
        format: Format::Eng,
        access,
        whole: false,
        note: None,
        qualifies: None,
        inputs: Inputs::Any,
    }
}

impl Param {
    const fn qualifies(mut self, when: fn(&Scenario) -> bool) -> Param {
        self.qualifies = Some(when);
        self
    }
    const fn note(mut self, note: &'static str) -> Param {
        self.note = Some(note);
        self
    }
    const fn starting(mut self, start: fn(&Scenario) -> f64) -> Param {
        self.start = start;
        self
    }
    const fn shown(mut self, format: Format) -> Param {
        self.format = format;
        self
    }
    const fn whole(mut self) -> Param {
        self.whole = true;
        self
    }
    const fn only(mut self, inputs: Inputs) -> Param {
        self.inputs = inputs;
        self
    }
}

use Group::{Amplifier, Environment, SourceLoad, Spread, Stage, SupplySignal};
use Presence::*;
use Stepping::*;

/// Every field, in file and pane order.
pub static PARAMS: [Param; 100] = [
    entry(
        "stage.topology",
        "topology",
        "",
        Stage,
        Choice,
        Required,
        (0.0, 0.0),
        Access::Choice {
            names: &Topology::NAMES,
            get: |s| {
                Topology::ALL
                    .iter()
                    .position(|t| *t == s.stage.topology)
                    .unwrap_or(0)
            },
            set: |s, i| set_topology(s, Topology::ALL[i % Topology::ALL.len()]),
        },
    ),
    entry(
        "stage.rg",
        "rg",
        "Ω",
        Stage,
        Resistor,
        GainStage,
        OHMS,
        number!(opt stage.rg),
    )
    .starting(|_| 1e3),
    entry(
        "stage.rf",
        "rf",
        "Ω",
        Stage,
        Resistor,
        FeedbackResistor,
        OHMS,
        number!(opt stage.rf),
    )
    .starting(|_| 1e3),
    entry(
        "stage.cf",
        "cf",
        "F",
        Stage,
        Capacitor,
        ZeroIsAbsent,
        STAGE_FARADS,
        number!(opt stage.cf),
    )
    .starting(|_| 1e-12),
    entry(
        "stage.r1",
        "r1",
        "Ω",
        Stage,
        Resistor,
        GainStage,
        OHMS,
        number!(opt stage.r1),
    )
    .starting(|_| 10e3),
    entry(
        "stage.r2",
        "r2",
        "Ω",
        Stage,
        Resistor,
        GainStage,
        OHMS,
        number!(opt stage.r2),
    )
    .starting(|_| 10e3),
    entry(
        "stage.r3",
        "r3",
        "Ω",
        Stage,
        Resistor,
        GainStage,
        OHMS,
        number!(opt stage.r3),
    )
    .starting(|_| 10e3),
    entry(
        "stage.r4",
        "r4",
        "Ω",
        Stage,
        Resistor,
        GainStage,
        OHMS,
        number!(opt stage.r4),
    )
    .starting(|_| 10e3),
    entry(
        "stage.c4",
        "c4",
        "F",
        Stage,
        Capacitor,
        GainStage,
        STAGE_FARADS,
        number!(opt stage.c4),
    )
    .starting(|_| 1e-12),
    entry(
        "stage.riso",
        "riso",
        "Ω",
        Stage,
        Resistor,
        ZeroIsAbsent,
        OHMS,
        number!(opt stage.riso),
    )
    .starting(|_| 10.0),
    entry(
        "stage.feedback",
        "feedback",
        "",
        Stage,
        Choice,
        Optional,
        (0.0, 0.0),
        Access::Choice {
            names: &Feedback::NAMES,
            get: |s| {
                Feedback::ALL
                    .iter()
                    .position(|f| *f == s.stage.feedback)
                    .unwrap_or(0)
            },
            set: |s, i| s.stage.feedback = Feedback::ALL[i % Feedback::ALL.len()],
        },
    ),
    entry(
        "stage.series",
        "series",
        "",
        Stage,
        Choice,
        Required,
        (0.0, 0.0),
        Access::Choice {
            names: &Series::NAMES,
            get: |s| {
                Series::ALL
                    .iter()
                    .position(|x| *x == s.stage.series)
                    .unwrap_or(0)
            },
            set: |s, i| s.stage.series = Series::ALL[i % Series::ALL.len()],
        },
    ),
    entry(
        "stage.tolerance",
        "tolerance",
        "",
        Stage,
        List(&TOLERANCES),
        Required,
        TOLERANCE,
        number!(req stage.tolerance),
    )
    .shown(Format::Percent),
    entry(
        "stage.tc_ppm",
        "tempco",
        "ppm/°C",
        Stage,
        List(&TEMPCOS),
        Optional,
        TC_PPM,
        number!(opt stage.tc_ppm),
    )
    .starting(|_| 25.0)
    .qualifies(|s| s.temp_range.is_some())
    .note("each resistor's coefficient lies within ± this; rf and rg tracking is what counts"),
    entry(
        "amp.a0",
        "a0",
        "",
        Amplifier,
        OneTwoFive,
        Required,
        A0,
        number!(req amp.a0),
    )
    .shown(Format::RatioDb),
    entry(
        "amp.gbw",
        "gbw",
        "Hz",
        Amplifier,
        OneTwoFive,
        Required,
        GBW,
        number!(req amp.gbw),
    ),
    entry(
        "amp.fp2",
        "fp2",
        "Hz",
        Amplifier,
        OneTwoFive,
        Optional,
        HERTZ,
        number!(opt amp.fp2),
    )
    .starting(|s| s.amp.gbw * 3.0),
    entry(
        "amp.rin",
        "rin",
        "Ω",
        Amplifier,
        OneTwoFive,
        Optional,
        OHMS,
        number!(opt amp.rin),
    )
    .starting(|_| 1e6),
    entry(
        "amp.cin",
        "cin",
        "F",
        Amplifier,
        Capacitor,
        ZeroIsAbsent,
        STAGE_FARADS,
        number!(opt amp.cin),
    )
    .starting(|_| 1e-12),
    entry(
        "amp.ro",
        "ro",
        "Ω",
        Amplifier,
        OneTwoFive,
        Required,
        RO,
        number!(req amp.ro),
    ),
    entry(
        "amp.vnoise",
        "en",
        "V/√Hz",
        Amplifier,
        OneTwoFive,
        ZeroAllowed,
        VNOISE,
        number!(req amp.vnoise),
    ),
    entry(
        "amp.vnoise_corner",
        "en corner",
        "Hz",
        Amplifier,
        OneTwoFive,
        ZeroIsAbsent,
        HERTZ,
        number!(opt amp.vnoise_corner),
    )
    .starting(|_| 10.0),
    entry(
        "amp.inoise",
        "in",
        "A/√Hz",
        Amplifier,
        OneTwoFive,
        ZeroAllowed,
        INOISE,
        number!(req amp.inoise),
    ),
    entry(
        "amp.inoise_corner",
        "in corner",
        "Hz",
        Amplifier,
        OneTwoFive,
        ZeroIsAbsent,
        HERTZ,
        number!(opt amp.inoise_corner),
    )
    .starting(|_| 10.0),
    entry(
        "amp.vos",
        "vos",
        "V",
        Amplifier,
        OneTwoFive,
        Optional,
        VOS,
        number!(opt amp.vos),
    )
    .starting(|_| 1e-3),
    entry(
        "amp.vos_drift",
        "vos drift",
        "V/°C",
        Amplifier,
        OneTwoFive,
        Optional,
        VOS_DRIFT,
        number!(opt amp.vos_drift),
    )
    .starting(|_| 1e-6),
    entry(
        "amp.ib",
        "ib",
        "A",
        Amplifier,
        OneTwoFive,
        Optional,
        IB,
        number!(opt amp.ib),
    )
    .starting(|_| 10e-9),
    entry(
        "amp.ios",
        "ios",
        "A",
        Amplifier,
        OneTwoFive,
        Optional,
        IOS,
        number!(opt amp.ios),
    )
    .starting(|_| 1e-9),
    entry(
        "amp.ib_doubling",
        "ib ×2 per",
        "°C",
        Amplifier,
        Linear(1.0),
        Optional,
        IB_DOUBLING,
        number!(opt amp.ib_doubling),
    )
    .starting(|_| 10.0)
    .qualifies(|s| s.amp.ib.is_some() || s.amp.ios.is_some())
    .note("°C per doubling of ib and ios from 25 °C: about 10 for FET inputs; none: constant"),
    entry(
        "amp.slew",
        "slew",
        "V/s",
        Amplifier,
        OneTwoFive,
        ZeroIsAbsent,
        SLEW,
        number!(opt amp.slew),
    )
    .starting(|_| 1e6),
    entry(
        "amp.swing_neg",
        "swing −",
        "V",
        Amplifier,
        Linear(0.1),
        Optional,
        SWING,
        number!(opt amp.swing_neg),
    ),
    entry(
        "amp.swing_pos",
        "swing +",
        "V",
        Amplifier,
        Linear(0.1),
        Optional,
        SWING,
        number!(opt amp.swing_pos),
    ),
    entry(
        "amp.swing_load",
        "swing at",
        "Ω",
        Amplifier,
        OneTwoFive,
        Optional,
        SWING_LOAD,
        number!(opt amp.swing_load),
    )
    .starting(|_| 10e3)
    .qualifies(|s| s.amp.swing_neg.is_some() || s.amp.swing_pos.is_some())
    .note("datasheet swing at the pin: enter its load here (to mid-supply); the ro drop is added"),
    entry(
        "amp.cm_neg",
        "cm −",
        "V",
        Amplifier,
        Linear(0.1),
        Optional,
        CM,
        number!(opt amp.cm_neg),
    ),
    entry(
        "amp.cm_pos",
        "cm +",
        "V",
        Amplifier,
        Linear(0.1),
        Optional,
        CM,
        number!(opt amp.cm_pos),
    ),
    entry(
        "amp.iout",
        "iout",
        "A",
        Amplifier,
        OneTwoFive,
        ZeroIsAbsent,
        IOUT,
        number!(opt amp.iout),
    )
    .starting(|_| 20e-3),
    entry(
        "amp.gbw_tc",
        "gbw tc",
        "/°C",
        Amplifier,
        Linear(0.0005),
        Optional,
        GBW_TC,
        number!(opt amp.gbw_tc),
    )
    .starting(|_| -0.002)
    .qualifies(|s| s.temp_range.is_some())
    .note("relative change of gbw per °C away from temp (−0.002: −0.2 %/°C)"),
    entry(
        "amp.cmrr_db",
        "cmrr",
        "dB",
        Amplifier,
        Linear(5.0),
        Optional,
        AMP_CMRR_DB,
        number!(opt amp.cmrr_db),
    )
    .starting(|_| 90.0)
    .note("common-mode rejection at low frequency; none: infinite"),
    entry(
        "amp.cmrr_corner",
        "cmrr knee",
        "Hz",
        Amplifier,
        OneTwoFive,
        Optional,
        CORNER_HZ,
        number!(opt amp.cmrr_corner),
    )
    .starting(|_| 1.0e3)
    .qualifies(|s| s.amp.cmrr_db.is_some())
    .note("where the common-mode rejection starts to fall at 20 dB/decade; none: flat"),
    entry(
        "amp.psrr_db",
        "psrr",
        "dB",
        Amplifier,
        Linear(5.0),
        Optional,
        REJECTION_DB,
        number!(opt amp.psrr_db),
    )
    .starting(|_| 100.0)
    .note("supply rejection at low frequency, one figure for both rails; none: infinite"),
    entry(
        "amp.psrr_corner",
        "psrr knee",
        "Hz",
        Amplifier,
        OneTwoFive,
        Optional,
        CORNER_HZ,
        number!(opt amp.psrr_corner),
    )
    .starting(|_| 100.0)
    .qualifies(|s| s.amp.psrr_db.is_some())
    .note("where the supply rejection starts to fall at 20 dB/decade; none: flat"),
    entry(
        "source.r",
        "source r",
        "Ω",
        SourceLoad,
        OneTwoFive,
        ZeroAllowed,
        OHMS,
        number!(opt source.r),
    )
    .only(Inputs::Voltage),
    entry(
        "source.cd",
        "diode c",
        "F",
        SourceLoad,
        Capacitor,
        Optional,
        STAGE_FARADS,
        number!(opt source.cd),
    )
    .starting(|_| 10e-12)
    .only(Inputs::Current),
    entry(
        "source.rsh",
        "diode rsh",
        "Ω",
        SourceLoad,
        OneTwoFive,
        Optional,
        RSH,
        number!(opt source.rsh),
    )
    .starting(|_| 1e9)
    .only(Inputs::Current),
    entry(
        "source.r_plus",
        "source r+",
        "Ω",
        SourceLoad,
        OneTwoFive,
        Optional,
        (0.0, OHMS.1),
        number!(opt source.r_plus),
    )
    .qualifies(two_inputs)
    .note("input 2's source resistance; none: equal to source r"),
    entry(
        "load.r",
        "load r",
        "Ω",
        SourceLoad,
        OneTwoFive,
        Optional,
        OHMS,
        number!(opt load.r),
    )
    .starting(|_| 10e3),
    entry(
        "load.c",
        "load c",
        "F",
        SourceLoad,
        Capacitor,
        ZeroIsAbsent,
        FARADS,
        number!(opt load.c),
    )
    .starting(|_| 100e-12),
    entry(
        "load.sample.c",
        "sample c",
        "F",
        SourceLoad,
        Capacitor,
        Optional,
        STAGE_FARADS,
        sample!(c),
    )
    .qualifies(sampled)
    .note("the converter's sampling capacitor, switched onto the load at t = 0"),
    entry(
        "load.sample.r",
        "switch r",
        "Ω",
        SourceLoad,
        OneTwoFive,
        Optional,
        SWITCH_OHMS,
        sample!(r),
    )
    .qualifies(sampled),
    entry(
        "load.sample.from",
        "cap from",
        "V",
        SourceLoad,
        Linear(0.5),
        Optional,
        VOLTS,
        Access::Number {
            get: |s| s.load.sample.and_then(|x| x.from),
            set: |s, v| {
                if let Some(b) = s.load.sample.as_mut() {
                    b.from = v;
                }
            },
        },
    )
    .qualifies(sampled)
    .starting(|_| 0.0)
    .note("the sampling capacitor's voltage before the switch closes (none: 0 V)"),
    entry(
        "load.sample.full_scale",
        "range",
        "V",
        SourceLoad,
        OneTwoFive,
        Optional,
        FULL_SCALE,
        sample!(full_scale),
    )
    .qualifies(sampled),
    entry(
        "load.sample.bits",
        "bits",
        "",
        SourceLoad,
        Linear(1.0),
        Optional,
        BITS,
        Access::Number {
            get: |s| s.load.sample.map(|x| f64::from(x.bits)),
            set: |s, v| match v {
                Some(x) => {
                    s.load.sample.get_or_insert_with(Sample::default).bits = x.round() as u32
                }
                None => s.load.sample = None,
            },
        },
    )
    .qualifies(sampled)
    .whole(),
    entry(
        "load.sample.acquire",
        "acquire",
        "s",
        SourceLoad,
        OneTwoFive,
        Optional,
        ACQUIRE,
        sample!(acquire),
    )
    .qualifies(sampled),
    entry(
        "load.sample.rate",
        "rate",
        "Hz",
        SourceLoad,
        OneTwoFive,
        Optional,
        RATE,
        Access::Number {
            get: |s| s.load.sample.and_then(|x| x.rate),
            set: |s, v| {
                if let Some(b) = s.load.sample.as_mut() {
                    b.rate = v;
                }
            },
        },
    )
    .qualifies(sampled)
    .starting(|_| 1.0e6)
    .note("conversions per second: their average current's DC error at the load"),
    entry(
        "supply.neg",
        "rail −",
        "V",
        SupplySignal,
        Linear(0.5),
        Optional,
        VOLTS,
        Access::Number {
            get: |s| s.supply.map(|x| x.neg),
            set: |s, v| match v {
                Some(x) => s.supply.get_or_insert_with(Supply::default).neg = x,
                None => s.supply = None,
            },
        },
    )
    .starting(|_| -15.0),
    entry(
        "supply.pos",
        "rail +",
        "V",
        SupplySignal,
        Linear(0.5),
        Optional,
        VOLTS,
        Access::Number {
            get: |s| s.supply.map(|x| x.pos),
            set: |s, v| match v {
                Some(x) => s.supply.get_or_insert_with(Supply::default).pos = x,
                None => s.supply = None,
            },
        },
    )
    .starting(|_| 15.0),
    entry(
        "reference.v",
        "ref v",
        "V",
        SupplySignal,
        Linear(0.05),
        Optional,
        REF_VOLTS,
        Access::Number {
            get: |s| s.reference.map(|x| x.v),
            set: |s, v| match v {
                Some(x) => s.reference.get_or_insert_with(Reference::default).v = x,
                None => s.reference = None,
            },
        },
    )
    .starting(|s| s.supply.map_or(0.0, |p| 0.5 * (p.neg + p.pos)))
    // Offered (as "none") on every kind with a reference input, so one
    // can be added from the pane; r and c follow once it exists.
    .qualifies(|s| s.stage.topology.kind().has_reference()),
    entry(
        "reference.r",
        "ref r",
        "Ω",
        SupplySignal,
        OneTwoFive,
        Optional,
        REF_OHMS,
        Access::Number {
            get: |s| s.reference.map(|x| x.r),
            set: |s, v| match v {
                Some(x) => s.reference.get_or_insert_with(Reference::default).r = x,
                None => s.reference = None,
            },
        },
    )
    .starting(|_| 5e3)
    .qualifies(|s| s.reference.is_some()),
    entry(
        "reference.c",
        "ref c",
        "F",
        SupplySignal,
        Capacitor,
        ZeroIsAbsent,
        FARADS,
        Access::Number {
            get: |s| s.reference.and_then(|x| x.c),
            set: |s, v| {
                if let Some(r) = s.reference.as_mut() {
                    r.c = v;
                } else if v.is_some() {
                    s.reference = Some(Reference {
                        c: v,
                        ..Reference::default()
                    });
                }
            },
        },
    )
    .starting(|_| 10e-6)
    .qualifies(|s| s.reference.is_some_and(|r| r.r > 0.0)),
    entry(
        "supply.ripple",
        "ripple",
        "V",
        SupplySignal,
        OneTwoFive,
        Optional,
        RIPPLE,
        supply_field!(ripple),
    )
    .starting(|_| 0.05)
    .qualifies(|s| s.supply.is_some())
    .note("peak ripple on the supply as a whole (needs amp.psrr_db to reach the output)"),
    entry(
        "supply.ripple_hz",
        "ripple at",
        "Hz",
        SupplySignal,
        OneTwoFive,
        Optional,
        CORNER_HZ,
        supply_field!(ripple_hz),
    )
    .starting(|_| 100.0e3)
    .qualifies(|s| s.supply.is_some_and(|x| x.ripple.is_some()))
    .note("the ripple's frequency; none: the rejection is read at DC"),
    entry(
        "source.dc",
        "source dc",
        "V",
        SupplySignal,
        Linear(0.1),
        Optional,
        VOLTS,
        number!(opt source.dc),
    )
    .only(Inputs::Voltage),
    entry(
        "source.idc",
        "input dc",
        "A",
        SupplySignal,
        OneTwoFive,
        Optional,
        IDC,
        number!(opt source.idc),
    )
    .starting(|_| 1e-9)
    .only(Inputs::Current),
    entry(
        "source.cm",
        "cm dc",
        "V",
        SupplySignal,
        Linear(0.1),
        Optional,
        VOLTS,
        number!(opt source.cm),
    )
    .qualifies(two_inputs),
    entry(
        "source.peak",
        "peak",
        "V",
        SupplySignal,
        OneTwoFive,
        Optional,
        PEAK,
        number!(opt source.peak),
    )
    .starting(|_| 1.0)
    .only(Inputs::Voltage),
    entry(
        "source.ipeak",
        "peak",
        "A",
        SupplySignal,
        OneTwoFive,
        Optional,
        IPEAK,
        number!(opt source.ipeak),
    )
    .starting(|_| 1e-6)
    .only(Inputs::Current),
    entry(
        "source.bias",
        "diode bias",
        "V",
        SupplySignal,
        Linear(0.5),
        Optional,
        BIAS,
        number!(opt source.bias),
    )
    .only(Inputs::Current),
    entry(
        "source.cm_peak",
        "cm peak",
        "V",
        SupplySignal,
        OneTwoFive,
        Optional,
        PEAK,
        number!(opt source.cm_peak),
    )
    .qualifies(two_inputs)
    .starting(|_| 1.0),
    entry(
        "step.size",
        "step",
        "V",
        SupplySignal,
        OneTwoFive,
        Optional,
        VOLTS,
        block!(step.size),
    )
    .starting(|_| crate::model::scenario::DEFAULT_STEP_V)
    .only(Inputs::Voltage),
    entry(
        "step.size_a",
        "step",
        "A",
        SupplySignal,
        OneTwoFive,
        Optional,
        IDC,
        block!(step.size_a),
    )
    .starting(|_| crate::model::scenario::DEFAULT_STEP_A)
    .only(Inputs::Current),
    entry(
        "step.settle_bits",
        "ts bits",
        "",
        SupplySignal,
        Linear(1.0),
        Optional,
        SETTLE_BITS,
        Access::Number {
            get: |s| s.step.and_then(|x| x.settle_bits).map(f64::from),
            set: |s, v| set_threshold(s, v.map(|n| (Some(n.round() as u32), None))),
        },
    )
    .qualifies(thresholded)
    .whole()
    .starting(|_| 16.0)
    .note("settle to half an LSB of this many bits: 2^−(N+1) of the final value"),
    entry(
        "step.settle_to",
        "settle to",
        "",
        SupplySignal,
        OneTwoFive,
        Optional,
        SETTLE_TO,
        Access::Number {
            get: |s| s.step.and_then(|x| x.settle_to),
            set: |s, v| set_threshold(s, v.map(|f| (None, Some(f)))),
        },
    )
    .qualifies(thresholded)
    .starting(|_| 1.0e-4)
    .note("settle to this fraction of the final value"),
    entry(
        "temp_c",
        "temp",
        "°C",
        Environment,
        Linear(5.0),
        Required,
        TEMP_C,
        number!(req temp_c),
    )
    .shown(Format::Celsius),
    temp_end(
        "temp_range.from",
        "temp low",
        |s| s.temp_range.map(|r| r.0),
        |s, v| set_temp_end(s, v, 0),
    )
    .starting(|_| -40.0),
    temp_end(
        "temp_range.to",
        "temp high",
        |s| s.temp_range.map(|r| r.1),
        |s, v| set_temp_end(s, v, 1),
    )
    .starting(|_| 85.0),
    entry(
        "band.from",
        "band from",
        "Hz",
        Environment,
        OneTwoFive,
        Required,
        HERTZ,
        number!(req band.0),
    ),
    entry(
        "band.to",
        "band to",
        "Hz",
        Environment,
        OneTwoFive,
        Required,
        HERTZ,
        number!(req band.1),
    ),
    entry(
        "spread.dist",
        "spread as",
        "",
        Spread,
        Choice,
        Required,
        (0.0, 0.0),
        Access::Choice {
            names: &Dist::NAMES,
            get: |s| {
                let dist = s.spread.as_ref().map_or(Dist::default(), |b| b.dist);
                Dist::ALL.iter().position(|d| *d == dist).unwrap_or(0)
            },
            set: |s, i| {
                s.spread.get_or_insert_with(Default::default).dist = Dist::ALL[i % Dist::ALL.len()];
                tidy(s);
            },
        },
    ),
    entry(
        "spread.cap_tol",
        "cf spread",
        "",
        Spread,
        List(&SPREADS),
        Optional,
        SPREAD,
        block!(spread.cap_tol),
    )
    .starting(|_| 0.1)
    .shown(Format::Percent),
    entry(
        "spread.gbw_tol",
        "gbw spread",
        "",
        Spread,
        List(&SPREADS),
        Optional,
        SPREAD,
        block!(spread.gbw_tol),
    )
    .starting(|_| 0.3)
    .shown(Format::Percent),
    entry(
        "spread.a0_min",
        "a0 lowest",
        "",
        Spread,
        OneTwoFive,
        Optional,
        A0,
        block!(spread.a0_min),
    )
    .starting(|s| s.amp.a0 / 2.0),
    entry(
        "spread.ro_tol",
        "ro spread",
        "",
        Spread,
        List(&SPREADS),
        Optional,
        SPREAD,
        block!(spread.ro_tol),
    )
    .starting(|_| 0.2)
    .shown(Format::Percent),
    entry(
        "spread.cd_tol",
        "cd spread",
        "",
        Spread,
        List(&SPREADS),
        Optional,
        SPREAD,
        block!(spread.cd_tol),
    )
    .starting(|_| 0.1)
    .shown(Format::Percent)
    .only(Inputs::Current),
    entry(
        "spread.trials",
        "trials",
        "",
        Spread,
        OneTwoFive,
        Optional,
        TRIALS,
        block!(spread.trials as u32),
    )
    .starting(|_| 2000.0)
    .whole(),
    entry(
        "spread.seed",
        "seed",
        "",
        Spread,
        Linear(1.0),
        Optional,
        SEED,
        block!(spread.seed as u64),
    )
    .whole(),
    entry(
        "spec.gain_target",
        "gain aim",
        "",
        Spread,
        OneTwoFive,
        Optional,
        GAIN_TARGET_VA,
        block!(spec.gain_target),
    )
    .starting(Scenario::nominal_gain),
    entry(
        "spec.gain_error_max",
        "gain err ≤",
        "",
        Spread,
        List(&ERROR_LIMITS),
        Optional,
        FRACTION,
        block!(spec.gain_error_max),
    )
    .starting(|_| 0.01)
    .shown(Format::Percent),
    entry(
        "spec.f_3db_min",
        "f−3dB ≥",
        "Hz",
        Spread,
        OneTwoFive,
        Optional,
        HERTZ,
        block!(spec.f_3db_min),
    )
    .starting(|s| s.band.1),
    entry(
        "spec.peaking_max_db",
        "peaking ≤",
        "dB",
        Spread,
        Linear(0.5),
        Optional,
        DB_LIMIT,
        block!(spec.peaking_max_db),
    ),
    entry(
        "spec.cmrr_min_db",
        "CMRR ≥",
        "dB",
        Spread,
        Linear(1.0),
        Optional,
        CMRR_LIMIT,
        block!(spec.cmrr_min_db),
    )
    .qualifies(two_inputs),
    entry(
        "spec.pm_min_deg",
        "margin ≥",
        "°",
        Spread,
        Linear(5.0),
        Optional,
        DEG_LIMIT,
        block!(spec.pm_min_deg),
    )
    .starting(|_| 45.0),
    entry(
        "spec.zout_max_ohm",
        "|Zout| ≤",
        "Ω",
        Spread,
        OneTwoFive,
        Optional,
        OHM_LIMIT,
        block!(spec.zout_max_ohm),
    ),
    entry(
        "spec.zout_at_hz",
        "|Zout| at",
        "Hz",
        Spread,
        OneTwoFive,
        Optional,
        HZ_AT,
        block!(spec.zout_at_hz),
    )
    .starting(|_| 100.0e3),
    entry(
        "spec.noise_rms_max",
        "noise ≤",
        "V",
        Spread,
        OneTwoFive,
        Optional,
        RMS_LIMIT,
        block!(spec.noise_rms_max),
    )
    .starting(|_| 100.0e-6),
    entry(
        "spec.offset_max_v",
        "offset ≤",
        "V",
        Spread,
        OneTwoFive,
        Optional,
        PEAK,
        block!(spec.offset_max_v),
    )
    .starting(|_| 10.0e-3),
    entry(
        "spec.settle_max_s",
        "settling ≤",
        "s",
        Spread,
        OneTwoFive,
        Optional,
        SECONDS,
        block!(spec.settle_max_s),
    )
    .starting(|_| 1.0e-6),
    entry(
        "spec.kick_error_max_lsb",
        "kick LSB ≤",
        "",
        Spread,
        Linear(0.25),
        Optional,
        LSB_LIMIT,
        block!(spec.kick_error_max_lsb),
    )
    .qualifies(sampled)
    .starting(|_| 0.5),
    entry(
        "spec.headroom_min_v",
        "headroom ≥",
        "V",
        Spread,
        Linear(0.1),
        Optional,
        VOLTS,
        block!(spec.headroom_min_v),
    )
    .starting(|_| 0.2),
    entry(
        "spec.supply_rejection_min_db",
        "sup rej ≥",
        "dB",
        Spread,
        Linear(5.0),
        Optional,
        REJECTION_DB,
        block!(spec.supply_rejection_min_db),
    )
    .starting(|_| 60.0),
    entry(
        "spec.yield_min",
        "yield ≥",
        "",
        Spread,
        List(&YIELDS),
        Optional,
        FRACTION,
        block!(spec.yield_min),
    )
    .starting(|_| 0.99)
    .shown(Format::Share),
];

/// One end of the temperature range.
const fn temp_end(
    path: &'static str,
    label: &'static str,
    get: fn(&Scenario) -> Option<f64>,
    set: fn(&mut Scenario, Option<f64>),
) -> Param {
    entry(
        path,
        label,
        "°C",
        Environment,
        Linear(5.0),
        Optional,
        TEMP_C,
        Access::Number { get, set },
    )
    .shown(Format::Celsius)
}

/// Set one end of the temperature range; a range typed into nothing
/// starts as −40 to 85 °C (common practice: the industrial range), and
/// taking either end away takes the range away.
fn set_temp_end(s: &mut Scenario, v: Option<f64>, end: usize) {
    match v {
        Some(x) => {
            let r = s.temp_range.get_or_insert((-40.0, 85.0));
            if end == 0 {
                r.0 = x
            } else {
                r.1 = x
            }
        }
        None => s.temp_range = None,
    }
}

/// The table entry with this dotted path.
pub fn param(path: &str) -> Option<ParamRef> {
    PARAMS.iter().find(|p| p.path == path)
}

/// The field name errors use: `band` for both band ends, as in the file.
pub fn file_field(path: &str) -> &str {
    match path.split_once('.') {
        Some(("band", _)) => "band",
        Some(("temp_range", _)) => "temp_range",
        _ => path,
    }
}

/// Change topology, keeping the values of the parts both kinds have
/// and filling in the parts the new one needs.
pub fn set_topology(s: &mut Scenario, t: Topology) {
    s.stage.topology = t;
    for part in t.kind().parts {
        let (Some(start), Some(p)) = (part.start, param(part.param)) else {
            continue;
        };
        if p.get(s).filter(|v| *v > 0.0).is_none() {
            p.set(s, Some(start));
        }
    }
    // The parts the new kind does not have go (a file would be refused).
    for p in PARAMS.iter() {
        if foreign_part(p, s) {
            p.set(s, None);
        }
    }
    // A second input's fields go with it.
    if !two_inputs(s) {
        for p in TWO_INPUT_FIELDS.into_iter().filter_map(param) {
            p.set(s, None);
        }
    }
    // The fields of the other kind of input go; one the new kind needs
    // (a voltage source's r) starts at its starting value.
    for p in PARAMS
        .iter()
        .filter(|p| matches!(p.access, Access::Number { .. }))
    {
        if !p.inputs.admit(s) {
            p.set(s, None);
        } else if p.raw(s).is_none() && p.check(s).is_some() {
            p.set(s, Some((p.start)(s)));
        }
    }
}

impl Param {
    /// Whether the row applies to this stage: a part the stage's kind
    /// does not have does not (a follower has no rg).
    pub fn applies(&self, s: &Scenario) -> bool {
        // Where the feedback is taken matters only across an riso (without
        // one the pin and the load terminal are one node).
        if self.path == "stage.feedback" {
            return present(s.stage.riso).is_some();
        }
        self.inputs.admit(s)
            && !(matches!(self.presence, GainStage | FeedbackResistor)
                && s.stage.topology.kind().part(self.path).is_none())
            && self
                .qualifies
                .is_none_or(|when| when(s) || self.raw(s).is_some())
    }

    /// A part the stage's kind does not need (or does not have).
    fn optional_part(&self, s: &Scenario) -> bool {
        s.stage
            .topology
            .kind()
            .part(self.path)
            .is_none_or(|p| !p.required)
    }

    /// Whether absent (or zero) is a valid state for this stage.
    fn may_be_absent(&self, s: &Scenario) -> bool {
        match self.presence {
            Optional | ZeroIsAbsent => true,
            GainStage | FeedbackResistor => self.optional_part(s),
            Required | ZeroAllowed => false,
        }
    }

    fn zero_is_absent(&self, s: &Scenario) -> bool {
        self.presence == ZeroIsAbsent
            || (self.presence == FeedbackResistor && self.optional_part(s))
    }

    /// Whether the value is a real resistor that should sit on the series.
    pub fn is_resistor(&self) -> bool {
        self.stepping == Resistor
    }

    /// Whether the file gives the field: an optional choice at its first
    /// (default) entry is left out of the reports, as of a saved file.
    pub fn given(&self, s: &Scenario) -> bool {
        match self.access {
            Access::Choice { get, .. } => self.presence != Optional || get(s) != 0,
            Access::Number { .. } => true,
        }
    }

    /// The raw value as stored (zero kept), None when absent or a choice.
    pub fn raw(&self, s: &Scenario) -> Option<f64> {
        match self.access {
            Access::Number { get, .. } => get(s),
            Access::Choice { .. } => None,
        }
    }

    /// The value, None when absent (zero where zero means absent).
    pub fn get(&self, s: &Scenario) -> Option<f64> {
        self.raw(s)
            .filter(|v| !(*v == 0.0 && self.zero_is_absent(s)))
    }

    /// Set the value (None = absent, for optional fields; ignored for
    /// required ones).
    pub fn set(&self, s: &mut Scenario, v: Option<f64>) {
        if let Access::Number { set, .. } = self.access {
            set(s, v);
        }
    }

    /// A choice's current name.
    pub fn choice(&self, s: &Scenario) -> Option<&'static str> {
        match self.access {
            Access::Choice { names, get, .. } => Some(names[get(s)]),
            Access::Number { .. } => None,
        }
    }

    /// The value as shown in the pane, with its unit.
    pub fn display(&self, s: &Scenario) -> String {
        if let Some(name) = self.choice(s) {
            return if self.path == "stage.series" {
                format!("{name} (±{} usual)", pct(s.stage.series.usual_tolerance()))
            } else {
                name.to_string()
            };
        }
        let Some(v) = self.get(s) else {
            let wire = self.presence == FeedbackResistor && self.optional_part(s);
            return if wire { "wire" } else { "none" }.into();
        };
        match self.format {
            Format::Eng => fmt_eng_sig(v, self.unit, 4).replace(' ', ""),
            Format::Percent if self.path == "stage.tolerance" => own_tolerances(s, v),
            Format::Percent => format!("±{}", pct(v)),
            Format::Share => pct(v),
            Format::RatioDb => format!(
                "{} ({} dB)",
                fmt_plain(v, 3),
                fmt_fixed(20.0 * v.log10(), 0)
            ),
            Format::Celsius => format!("{} °C", fmt_plain(v, 4)),
        }
    }

    /// Compact text that reads back to the same value ("none" when absent):
    /// the edit field's start and the A/B difference list.
    pub fn value_text(&self, s: &Scenario) -> String {
        if let Some(name) = self.choice(s) {
            return name.into();
        }
        match (self.get(s), self.format) {
            // Plain digits: "0.1%", never "100m%".
            (Some(v), Format::Percent | Format::Share) => format!("{}%", fmt_plain(v * 100.0, 4)),
            (Some(v), _) => fmt_compact(v),
            (None, _) => "none".into(),
        }
    }

    /// Text to start an edit with (empty for an absent value).
    pub fn edit_text(&self, s: &Scenario) -> String {
        match self.get(s) {
            None if self.choice(s).is_none() => String::new(),
            _ => self.value_text(s),
        }
    }

    /// The series note of a resistor: (series name, whether on it).
    pub fn series_note(&self, s: &Scenario) -> Option<(String, bool)> {
        if !self.is_resistor() {
            return None;
        }
        let v = self.get(s)?;
        Some((
            s.stage.series.name().to_string(),
            s.stage.series.contains(v),
        ))
    }

    /// How ← → move this value, in a few words ("along E24").
    pub fn step_text(&self, s: &Scenario) -> String {
        match self.stepping {
            Resistor => format!("along {}", s.stage.series.name()),
            Capacitor => format!("along {}", CAPACITOR_SERIES.name()),
            OneTwoFive => "1-2-5 per decade".into(),
            Linear(d) => format!("by {}", self.display_number(d)),
            List(_) => "along usual values".into(),
            Choice => "through the choices".into(),
        }
    }

    /// The value the next step each way would give: (down, up); None at
    /// an end.
    pub fn step_preview(&self, s: &Scenario) -> (Option<String>, Option<String>) {
        let side = |dir| {
            let mut t = s.clone();
            (self.step(&mut t, dir) && t.validate().is_ok()).then(|| self.display(&t))
        };
        (side(Direction::Down), side(Direction::Up))
    }

    /// A number in this field's format, without the choice or absence
    /// cases (for step sizes).
    fn display_number(&self, v: f64) -> String {
        match self.format {
            Format::Celsius => format!("{} °C", fmt_plain(v, 4)),
            Format::Percent | Format::Share => pct(v),
            _ => fmt_eng(v, self.unit),
        }
    }

    /// The accepted range as text, e.g. "1 mΩ to 10 TΩ".
    pub fn range_text(&self) -> String {
        let (lo, hi) = self.range;
        match self.format {
            Format::Percent | Format::Share => format!("{} to {}", pct(lo), pct(hi)),
            _ => format!("{} to {}", fmt_eng(lo, self.unit), fmt_eng(hi, self.unit)),
        }
    }

    /// Apply typed text. Errors are a sentence for the status line.
    pub fn apply_text(&self, s: &mut Scenario, text: &str) -> anyhow::Result<()> {
        let t = text.trim();
        if let Access::Choice { names, set, .. } = self.access {
            let i = names
                .iter()
                .position(|n| n.eq_ignore_ascii_case(t))
                .ok_or_else(|| anyhow::anyhow!("`{t}` is not one of {}", names.join(", ")))?;
            set(s, i);
            return Ok(());
        }
        let absent_words = ["", "none", "wire"];
        if self.may_be_absent(s) && absent_words.iter().any(|w| w.eq_ignore_ascii_case(t)) {
            self.set(s, None);
            return Ok(());
        }
        let v = match (self.format, t.strip_suffix('%')) {
            (Format::Percent | Format::Share, Some(num)) => parse_value(num)? / 100.0,
            (Format::Percent | Format::Share, None) => {
                let v = parse_value(t)?;
                if v >= 1.0 {
                    v / 100.0
                } else {
                    v
                }
            }
            _ => parse_value(t)?,
        };
        if self.whole && v.fract() != 0.0 {
            anyhow::bail!("{t} is not a whole number");
        }
        if v == 0.0 && self.zero_is_absent(s) {
            self.set(s, None);
        } else {
            self.set(s, Some(v));
        }
        Ok(())
    }

    /// Step the value. Returns false when nothing moved (at the end of its
    /// range, or absent and stepped down).
    pub fn step(&self, s: &mut Scenario, dir: Direction) -> bool {
        let up = dir == Direction::Up;
        if let Access::Choice { names, get, set } = self.access {
            let n = names.len();
            set(s, (get(s) + if up { 1 } else { n - 1 }) % n);
            return true;
        }
        let Some(v) = self.get(s) else {
            if up {
                self.set(s, Some((self.start)(s).clamp(self.range.0, self.range.1)));
            }
            return up;
        };
        let next = match self.stepping {
            Resistor if up => s.stage.series.next_above(v),
            Resistor => s.stage.series.next_below(v),
            Capacitor if up => CAPACITOR_SERIES.next_above(v),
            Capacitor => CAPACITOR_SERIES.next_below(v),
            Linear(d) if up => round_nano(v + d),
            Linear(d) => round_nano(v - d),
            List(list) if up => list.iter().copied().find(|t| *t > v * 1.0001).unwrap_or(v),
            List(list) => list
                .iter()
                .rev()
                .copied()
                .find(|t| *t < v * 0.9999)
                .unwrap_or(v),
            OneTwoFive | Choice => one_two_five(v, up),
        };
        let (lo, hi) = self.range;
        let next = if next.is_finite() {
            next.clamp(lo, hi)
        } else {
            v
        };
        if next == v {
            return false;
        }
        self.set(s, Some(next));
        true
    }

    /// Check this field of a scenario: a problem when a present value is not
    /// finite or outside its range, or a needed value is absent.
    pub fn check(&self, s: &Scenario) -> Option<FieldProblem> {
        let raw = self.raw(s);
        let problem = |message: String| {
            Some(FieldProblem {
                field: file_field(self.path).into(),
                message,
            })
        };
        let v = match raw {
            None if !self.applies(s) || self.may_be_absent(s) => return None,
            None if matches!(self.access, Access::Choice { .. }) => return None,
            None => {
                let name = s.stage.topology.name();
                return problem(format!(
                    "the field is missing: {} {name} stage needs {}",
                    article(name),
                    self.label
                ));
            }
            Some(_) if !self.inputs.admit(s) => {
                let name = s.stage.topology.name();
                let (has, other) = match self.inputs {
                    Inputs::Current => ("a voltage input", "current"),
                    _ => ("a current input", "voltage"),
                };
                return problem(format!(
                    "the {name} stage has {has}: {} belongs to {other}-input stages only; remove it",
                    self.path
                ));
            }
            Some(v) => v,
        };
        if !v.is_finite() {
            return problem(format!("{v} is not a finite number"));
        }
        let zero_ok = self.zero_is_absent(s) || self.presence == ZeroAllowed;
        if v == 0.0 && zero_ok {
            return None;
        }
        let (lo, hi) = self.range;
        if v < lo || v > hi {
            let zero = match self.presence {
                ZeroIsAbsent => " (or 0 for none)",
                ZeroAllowed => " (or 0)",
                FeedbackResistor if self.optional_part(s) => " (or 0 for a wire)",
                _ => "",
            };
            let range = self.range_text();
            // A long number also in engineering form: 20000000000000 (20 TΩ).
            let v = match v.abs() {
                a if a >= 1e4 || (a > 0.0 && a < 1e-2) => {
                    format!("{v} ({})", fmt_eng(v, self.unit))
                }
                _ => v.to_string(),
            };
            return problem(if v.starts_with('-') && lo >= 0.0 {
                format!("{v} must not be negative (accepted: {range}{zero})")
            } else {
                format!("{v} is outside the accepted range {range}{zero}")
            });
        }
        None
    }

    /// Whether a present value sits within a decade (a tenth of the span
    /// for linear ranges) of an end of its accepted range.
    pub fn near_range_end(&self, s: &Scenario) -> bool {
        let Some(v) = self.get(s) else {
            return false;
        };
        let (lo, hi) = self.range;
        if v == 0.0 || lo == hi {
            return false;
        }
        match self.stepping {
            // A yield near 100 % is the usual ask, not a slip.
            _ if self.format == Format::Share => false,
            // A spread from 0 is near its end only close to the top.
            _ if self.format == Format::Percent && lo == 0.0 => v > hi - 0.1 * (hi - lo),
            // A range starting at 0 has no low end to be near: 0 is a
            // plain value there.
            Linear(_) => {
                let span = hi - lo;
                (lo != 0.0 && v < lo + 0.1 * span) || v > hi - 0.1 * span
            }
            _ => (lo > 0.0 && v < lo * 10.0) || (lo < 0.0 && v < lo / 10.0) || v > hi / 10.0,
        }
    }
}

/// Set one settling threshold (bits or a fraction) and clear the other;
/// None clears both. A threshold makes the step block when there is none.
fn set_threshold(s: &mut Scenario, v: Option<(Option<u32>, Option<f64>)>) {
    let (bits, to) = v.unwrap_or((None, None));
    if bits.is_none() && to.is_none() && s.step.is_none() {
        return;
    }
    let step = s.step.get_or_insert_with(Step::default);
    step.settle_bits = bits;
    step.settle_to = to;
    tidy(s);
}

/// One settling threshold at most: `settle_bits` and `settle_to` say the
/// same thing two ways.
fn threshold_checks(s: &Scenario) -> Vec<FieldProblem> {
    match s.step {
        Some(Step {
            settle_bits: Some(n),
            settle_to: Some(f),
            ..
        }) => vec![FieldProblem {
            field: "step.settle_to".into(),
            message: format!(
                "{f}: step.settle_bits ({n}) already sets the threshold; give step.settle_bits or step.settle_to, not both"
            ),
        }],
        _ => Vec::new(),
    }
}

/// The rules between fields, after each field's own check.
fn cross_checks(s: &Scenario) -> Vec<FieldProblem> {
    let mut p = supply_checks(s);
    p.extend(reference_checks(s));
    p.extend(threshold_checks(s));
    p.extend(two_input_checks(s));
    p.extend(foreign_part_checks(s));
    p.extend(spread_checks(s));
    p.extend(part_tolerance_checks(s));
    p.extend(temperature_checks(s));

    p.extend(rejection_checks(s));
    let (lo, hi) = s.band;
    if lo.is_finite() && hi.is_finite() && lo > 0.0 {
        if hi <= lo {
            p.push(FieldProblem {
                field: "band".into(),
                message: format!("{hi} (band end) must be above the band start {lo}"),
            });
        } else if (hi / lo).log10() > MAX_BAND_DECADES {
            p.push(FieldProblem {
                field: "band".into(),
                message: format!(
                    "{lo} to {hi} spans {:.1} decades; at most {MAX_BAND_DECADES} are accepted",
                    (hi / lo).log10()
                ),
            });
        }
    }
    p
}

/// The temperature range in order, and a gbw that stays positive over it.
fn temperature_checks(s: &Scenario) -> Vec<FieldProblem> {
    let problem = |field: &str, message: String| {
        vec![FieldProblem {
            field: field.into(),
            message,
        }]
    };
    if let Some((lo, hi)) = s.temp_range.filter(|(lo, hi)| lo >= hi) {
        return problem(
            "temp_range",
            format!("{hi} (highest) must be above the lowest temperature {lo}"),
        );
    }
    let swing = s.temp_range.map_or(0.0, |(lo, hi)| {
        (lo - s.temp_c).abs().max((hi - s.temp_c).abs())
    });
    match s.amp.gbw_tc {
        Some(k) if k.abs() * swing >= 0.9 => problem(
            "amp.gbw_tc",
            format!(
                "{k} per °C over {} °C from temp would move gbw by {} %; at most 90 % is accepted",
                fmt_plain(swing, 4),
                fmt_plain(100.0 * k.abs() * swing, 3)
            ),
        ),
        _ => Vec::new(),
    }
}

/// Each per-part tolerance names a part of the stage's kind that spreads
/// and lies in the accepted range.
fn part_tolerance_checks(s: &Scenario) -> Vec<FieldProblem> {
    use crate::model::stages::Tolerance;
    let kind = s.stage.topology.kind();
    let names: Vec<&str> = kind
        .parts
        .iter()
        .filter(|p| p.tolerance != Tolerance::None)
        .map(|p| p.name)
        .collect();
    let mut p = Vec::new();
    for (name, v) in &s.stage.part_tolerance.0 {
        let field = format!("stage.part_tolerance.{name}");
        let (lo, hi) = PART_TOLERANCE;
        let message = if !names.contains(&name.as_str()) {
            format!(
                "`{name}` is not a part of {} {} stage: use {}",
                article(s.stage.topology.name()),
                s.stage.topology.name(),
                names.join(", ")
            )
        } else if !(lo..=hi).contains(v) {
            format!(
                "{v} is outside the accepted range {}% to {}%",
                fmt_plain(lo * 100.0, 3),
                fmt_plain(hi * 100.0, 3)
            )
        } else {
            continue;
        };
        p.push(FieldProblem { field, message });
    }
    p
}

/// The second input's and the common mode's fields: refused for a kind
/// with one input (they would be ignored), dropped when the pane switches
/// to one.
const TWO_INPUT_FIELDS: [&str; 4] = [
    "source.r_plus",
    "source.cm",
    "source.cm_peak",
    "spec.cmrr_min_db",
];

/// Part fields a kind without the part ignores rather than refuses: a
/// follower's rg (README: a follower ignores rg).
const IGNORED_PARTS: [(Topology, &str); 1] = [(Topology::Follower, "stage.rg")];

/// Whether `p` is a part field that the stage's kind does not have and
/// does not ignore (rg on a transimpedance stage, r1 on an inverting one).
pub fn foreign_part(p: &Param, s: &Scenario) -> bool {
    let t = s.stage.topology;
    matches!(p.presence, GainStage | FeedbackResistor)
        && t.kind().part(p.path).is_none()
        && !IGNORED_PARTS.contains(&(t, p.path))
}

/// A part the stage's kind does not have, refused where the file gives it
/// (it would be ignored), naming the kinds that have it.
fn foreign_part_checks(s: &Scenario) -> Vec<FieldProblem> {
    let name = s.stage.topology.name();
    PARAMS
        .iter()
        .filter(|p| p.raw(s).is_some() && foreign_part(p, s))
        .map(|p| {
            let kinds: Vec<&str> = Topology::ALL
                .iter()
                .filter(|t| t.kind().part(p.path).is_some())
                .map(|t| t.name())
                .collect();
            FieldProblem {
                field: file_field(p.path).into(),
                message: format!(
                    "{} {name} stage has no {}: it is a part of {} stages; remove it",
                    capital(article(name)),
                    p.label,
                    kinds.join(", ")
                ),
            }
        })
        .collect()
}

/// The second input's and the common mode's fields, refused for a kind
/// with one input (they would be ignored).
fn two_input_checks(s: &Scenario) -> Vec<FieldProblem> {
    if two_inputs(s) {
        return Vec::new();
    }
    let name = s.stage.topology.name();
    TWO_INPUT_FIELDS
        .into_iter()
        .filter_map(param)
        .filter(|p| p.raw(s).is_some())
        .map(|p| FieldProblem {
            field: file_field(p.path).into(),
            message: format!(
                "{} {name} stage has one input: {} applies to a stage with two inputs (Difference)",
                capital(article(name)),
                p.label
            ),
        })
        .collect()
}

/// A word with its first letter in capitals.
fn capital(word: &str) -> String {
    let mut c = word.chars();
    c.next()
        .map(|f| f.to_uppercase().chain(c).collect())
        .unwrap_or_default()
}

/// "an" before a word that starts with a vowel letter, else "a" (common
/// English usage; the topology names are read as spelled).
fn article(word: &str) -> &'static str {
    match word.chars().next().map(|c| c.to_ascii_lowercase()) {
        Some('a' | 'e' | 'i' | 'o' | 'u') => "an",
        _ => "a",
    }
}

/// The spread's open-loop gain range in order, and a gain target that is
/// not zero.
fn spread_checks(s: &Scenario) -> Vec<FieldProblem> {
    let mut p = Vec::new();
    if let Some(lo) = s.spread.as_ref().and_then(|b| b.a0_min) {
        if lo > s.amp.a0 {
            p.push(FieldProblem {
                field: "spread.a0_min".into(),
                message: format!(
                    "{lo} (lowest open-loop gain) must not be above amp.a0 {}",
                    s.amp.a0
                ),
            });
        }
    }
    if s.spec.as_ref().and_then(|b| b.gain_target) == Some(0.0) {
        p.push(FieldProblem {
            field: "spec.gain_target".into(),
            message: "0 is not a gain target: the error is relative to it".into(),
        });
    }
    // A gain in V/V stays within the narrower range (V/A reaches 1e13).
    if let Some(t) = s.spec.as_ref().and_then(|b| b.gain_target) {
        let (lo, hi) = GAIN_TARGET;
        if !s.current_input() && (t < lo || t > hi) {
            p.push(FieldProblem {
                field: "spec.gain_target".into(),
                message: format!(
                    "{t} is outside the accepted range {} to {} for a gain in V/V",
                    fmt_compact(lo),
                    fmt_compact(hi)
                ),
            });
        }
    }
    // The target is signed like the stage's gain: −rf/rg inverting, else
    // positive; the other sign would read as an error near −200 %.
    if let Some(t) = s.spec.as_ref().and_then(|b| b.gain_target) {
        let inverting = s.stage.topology.kind().negative;
        if t != 0.0 && (t < 0.0) != inverting {
            let sign = if inverting { "negative" } else { "positive" };
            p.push(FieldProblem {
                field: "spec.gain_target".into(),
                message: format!(
                    "{t}: the stage is {:?}, its gain is {sign}: write {}",
                    s.stage.topology, -t
                ),
            });
        }
    }
    p
}

/// A reference only where the kind returns something to it, and its
/// capacitor only behind a resistance.
fn reference_checks(s: &Scenario) -> Vec<FieldProblem> {
    let Some(r) = s.reference else {
        return Vec::new();
    };
    let name = s.stage.topology.name();
    if !s.stage.topology.kind().has_reference() {
        return vec![FieldProblem {
            field: "reference.v".into(),
            message: format!(
                "{} {name} stage has no reference input (nothing in it returns to ground): remove the reference block",
                article(name)
            ),
        }];
    }
    if present(r.c).is_some() && r.r == 0.0 {
        return vec![FieldProblem {
            field: "reference.c".into(),
            message: format!(
                "{}: a bypass capacitor across an ideal reference (r 0) does nothing; give reference.r or remove c",
                fmt_eng(r.c.unwrap_or(0.0), "F")
            ),
        }];
    }
    Vec::new()
}

/// A limit on the supply rejection needs the amplifier's figure: without
/// `amp.psrr_db` the rejection is unbounded and there is nothing to hold.
fn rejection_checks(s: &Scenario) -> Vec<FieldProblem> {
    let limit = s.spec.as_ref().and_then(|b| b.supply_rejection_min_db);
    match (limit, s.amp.psrr_db) {
        (Some(v), None) => vec![FieldProblem {
            field: "spec.supply_rejection_min_db".into(),
            message: format!(
                "{v}: the amplifier gives no amp.psrr_db, so its supply rejection is unbounded; give amp.psrr_db or drop the limit"
            ),
        }],
        _ => Vec::new(),
    }
}

/// The rails in order, and room between them for the output and the
/// input common-mode range.
fn supply_checks(s: &Scenario) -> Vec<FieldProblem> {
    let Some(Supply { neg, pos, .. }) = s.supply else {
        return Vec::new();
    };
    let problem = |field: &str, message: String| {
        vec![FieldProblem {
            field: field.into(),
            message,
        }]
    };
    if neg >= pos {
        return problem(
            "supply.neg",
            format!("{neg} (negative rail) must be below the positive rail {pos}"),
        );
    }
    let a = &s.amp;
    let (sn, sp) = (a.swing_neg.unwrap_or(0.0), a.swing_pos.unwrap_or(0.0));
    if neg + sn >= pos - sp {
        return problem(
            "amp.swing_neg",
            format!("swing {sn} + {sp} leaves no output range between the rails {neg} and {pos}"),
        );
    }
    let (cn, cp) = (a.cm_neg.unwrap_or(0.0), a.cm_pos.unwrap_or(0.0));
    if neg + cn >= pos - cp {
        return problem(
            "amp.cm_neg",
            format!("common-mode limits {cn} and {cp} leave no input range between the rails {neg} and {pos}"),
        );
    }
    Vec::new()
}

/// Every problem of a scenario, in file order.
pub fn problems(s: &Scenario) -> Vec<FieldProblem> {
    let mut p: Vec<FieldProblem> = PARAMS.iter().filter_map(|x| x.check(s)).collect();
    if p.is_empty() {
        p = cross_checks(s);
    }
    p
}

/// Every field as (dotted name, value text), in file order; absent optional
/// fields read "none". The band is one field in the file, so one entry.
pub fn field_list(s: &Scenario) -> Vec<(&'static str, String)> {
    let mut out = vec![("title", s.title.clone())];
    for p in PARAMS.iter() {
        match p.path {
            "band.from" => out.push((
                "band",
                format!("{} to {}", fmt_compact(s.band.0), fmt_compact(s.band.1)),
            )),
            "band.to" => {}
            "temp_range.from" => out.push((
                "temp_range",
                s.temp_range.map_or("none".into(), |(a, b)| {
                    format!("{} to {}", fmt_compact(a), fmt_compact(b))
                }),
            )),
            "temp_range.to" => {}
            "stage.tolerance" => {
                out.push((p.path, p.value_text(s)));
                out.push(("stage.part_tolerance", part_tolerance_text(s)));
            }
            _ => out.push((p.path, p.value_text(s))),
        }
    }
    out
}

/// The stage tolerance with the parts' own after it: "±1% (rf ±0.1%)".
fn own_tolerances(s: &Scenario, v: f64) -> String {
    if s.stage.part_tolerance.is_empty() {
        return format!("±{}", pct(v));
    }
    let own: Vec<String> = s
        .stage
        .part_tolerance
        .0
        .iter()
        .map(|(n, t)| format!("{n} ±{}", pct(*t)))
        .collect();
    format!("±{} ({})", pct(v), own.join(", "))
}

/// The per-part tolerances as text ("rf 0.1%, rg 0.1%"; "none").
pub fn part_tolerance_text(s: &Scenario) -> String {
    if s.stage.part_tolerance.is_empty() {
        return "none".into();
    }
    let parts: Vec<String> = s
        .stage
        .part_tolerance
        .0
        .iter()
        .map(|(n, v)| format!("{n} {}%", fmt_compact(v * 100.0)))
        .collect();
    parts.join(", ")
}

/// A sum of steps without the binary fraction's tail (1.5 + 0.1 = 1.6).
fn round_nano(v: f64) -> f64 {
    (v * 1e9).round() / 1e9
}

fn pct(f: f64) -> String {
    format!("{}%", fmt_plain(f * 100.0, 3))
}

/// Next value of the 1-2-5 sequence above or below `v`.
pub fn one_two_five(v: f64, up: bool) -> f64 {
    if v < 0.0 {
        return -one_two_five(-v, !up);
    }
    if v == 0.0 || !v.is_finite() {
        return v;
    }
    let d = v.log10().floor();
    let base = 10f64.powf(d);
    let candidates: Vec<f64> = [-1.0, 0.0, 1.0]
        .iter()
        .flat_map(|k| {
            let b = base * 10f64.powf(*k);
            [b, 2.0 * b, 5.0 * b]
        })
        .chain(std::iter::once(base * 100.0))
        .collect();
    if up {
        candidates
            .into_iter()
            .find(|c| *c > v * 1.0001)
            .unwrap_or(v * 2.0)
    } else {
        candidates
            .into_iter()
            .rev()
            .find(|c| *c < v * 0.9999)
            .unwrap_or(v / 2.0)
    }
}

/// Snap every real resistor to its nearest series value; how many moved.
pub fn snap_resistors(s: &mut Scenario) -> usize {
    let mut n = 0;
    for p in PARAMS.iter().filter(|p| p.is_resistor()) {
        if !p.applies(s) {
            continue;
        }
        if let Some(v) = p.get(s) {
            let snapped = s.stage.series.nearest(v);
            if (snapped - v).abs() > 1e-9 * v {
                p.set(s, Some(snapped));
                n += 1;
            }
        }
    }
    n
}

impl Scenario {
    /// Check every field against the parameter table; all problems are
    /// returned, in file order.
    pub fn validate(&self) -> Result<(), Vec<FieldProblem>> {
        let p = problems(self);
        if p.is_empty() {
            Ok(())
        } else {
            Err(p)
        }
    }
    /// The fields whose values differ: (name, value in self, value in other).
    pub fn differences(&self, other: &Scenario) -> Vec<(&'static str, String, String)> {
        field_list(self)
            .into_iter()
            .zip(field_list(other))
            .filter(|(a, b)| a.1 != b.1)
            .map(|(a, b)| (a.0, a.1, b.1))
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_are_unique_and_name_fields() {
        for (i, p) in PARAMS.iter().enumerate() {
            assert!(PARAMS[..i].iter().all(|q| q.path != p.path), "{}", p.path);
            assert_eq!(param(p.path).map(|q| q.path), Some(p.path));
        }
    }

    #[test]
    fn every_number_reads_back_what_it_set() {
        // The built-in demo, read as the loader reads it (implicit Some).
        let mut s: Scenario = ron::Options::default()
            .with_default_extension(ron::extensions::Extensions::IMPLICIT_SOME)
            .from_str(include_str!("../../assets/demo.ron"))
            .expect("the demo reads");
        for p in PARAMS
            .iter()
            .filter(|p| matches!(p.access, Access::Number { .. }))
        {
            let v = (p.range.0.max(1e-9) * p.range.1.max(1e-9)).sqrt();
            let v = if p.whole { v.round() } else { v };
            p.set(&mut s, Some(v));
            assert_eq!(p.raw(&s), Some(v), "{}", p.path);
        }
    }
}
