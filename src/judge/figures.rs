//! The figure table: one entry per scalar result, the only place a
//! figure's JSON key, label, unit, formatting and source are written. The
//! JSON and text reports, `compare`, the workbench's figures row and its
//! A/B difference cells all iterate [`FIGURES`].
//!
//! To add a figure: compute it in the analysis, then add one entry here.

use crate::judge::Evaluation;
use crate::model::stages::GainUnit;
use crate::model::values::{fmt_eng, spelled};

/// How a figure's number reads.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Unit {
    /// A plain ratio (gain), also shown in dB in the text report.
    Ratio,
    /// A fraction, shown in percent.
    Fraction,
    /// A quantity in engineering notation with this SI unit.
    Si(&'static str),
    Db,
    Degrees,
    /// A count of things.
    Count,
    /// A number already in percent.
    Percent,
    /// Yes or no (JSON true/false; read as 1 or 0).
    Flag,
    /// Least significant bits of the stage's converter.
    Lsb,
}

/// The text report's section for a figure.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Section {
    Gain,
    Loop,
    Impedance,
    Noise,
    /// The supply ripple at the load (with the amplifier's supply rejection).
    Supply,
    DcErrors,
    SignalLimits,
    /// The step response: in JSON an object `step` of its own.
    Step,
    /// The sampling capacitor's kick (with `load.sample`).
    Kick,
}

impl Section {
    pub const ALL: [Section; 9] = [
        Section::Gain,
        Section::Loop,
        Section::Impedance,
        Section::Noise,
        Section::Supply,
        Section::DcErrors,
        Section::SignalLimits,
        Section::Step,
        Section::Kick,
    ];

    /// The JSON object the section's figures sit in (None: top level).
    pub fn json_object(self) -> Option<&'static str> {
        (self == Section::Step).then_some("step")
    }

    /// Whether the text report shows the section for this stage: the DC
    /// errors and signal limits only when their inputs are given.
    pub fn shown_for(self, e: &Evaluation) -> bool {
        match self {
            Section::DcErrors => e.analysis.limits.dc_given,
            Section::SignalLimits => e.analysis.limits.signal_given,
            Section::Kick => e.analysis.kick.is_some(),
            Section::Supply => {
                e.analysis.supply_rejection_db.is_some() || e.analysis.ripple_out_v.is_some()
            }
            _ => true,
        }
    }
    pub fn title(self) -> &'static str {
        match self {
            Section::Gain => "Gain",
            Section::Loop => "Loop",
            Section::Impedance => "Impedance",
            Section::Noise => "Noise at the load",
            Section::Supply => "Supply ripple",
            Section::DcErrors => "DC errors",
            Section::SignalLimits => "Signal limits",
            Section::Step => "Step response",
            Section::Kick => "Sampling kick",
        }
    }
}

/// Where a figure appears.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shown {
    /// A top-level key of `report --json`.
    pub json: bool,
    /// A line of the text report.
    pub text: bool,
    /// One of the key figures: `compare`, the workbench figures row and
    /// its A/B differences.
    pub key_figure: bool,
    /// A column of the workbench figures row when a stage defines it.
    pub row_when_given: bool,
}

const ALL_VIEWS: Shown = Shown {
    json: true,
    text: true,
    key_figure: true,
    row_when_given: false,
};
const REPORT: Shown = Shown {
    json: true,
    text: true,
    key_figure: false,
    row_when_given: false,
};
const TEXT_ONLY: Shown = Shown {
    json: false,
    text: true,
    key_figure: false,
    row_when_given: false,
};
const KEY_ONLY: Shown = Shown {
    json: false,
    text: false,
    key_figure: true,
    row_when_given: false,
};

/// In the reports, and a column of the figures row when a stage has it.
const REPORT_ROW: Shown = Shown {
    json: true,
    text: true,
    key_figure: false,
    row_when_given: true,
};

const ROW_IF_GIVEN: Shown = Shown {
    json: false,
    text: false,
    key_figure: false,
    row_when_given: true,
};

/// Above this CMRR the text reads "> 160 dB" and the plots draw the
/// CMRR at it (no real stage holds more; an unbounded one is above it).
pub const CMRR_CEILING_DB: f64 = 160.0;

/// The CMRR: in the reports and as a column of the figures row.
const CMRR_SHOWN: Shown = Shown {
    json: true,
    text: true,
    key_figure: false,
    row_when_given: true,
};

/// One scalar result.
pub struct Figure {
    /// JSON key, also the figure's name in `compare --json`.
    pub key: &'static str,
    /// Name in the text report and `compare`.
    pub label: &'static str,
    /// Column header in the workbench's figures row.
    pub short: &'static str,
    pub unit: Unit,
    pub section: Section,
    pub shown: Shown,
    /// A closed-loop figure means nothing when the loop is unstable.
    pub closed_loop: bool,
    /// A stability margin: when the closed-loop poles say the stage is
    /// unstable while the margin reads positive, it reads "unstable"
    /// instead (the margin arithmetic is then misleading).
    pub margin: bool,
    /// |Zout| at one frequency: the workbench shows it at its own chosen
    /// frequency (the `{f}` in `short`).
    pub at_probe: bool,
    /// What the text report says when the figure is undefined.
    pub undefined: &'static str,
    /// Defined only when its inputs are given: the text report leaves the
    /// line out rather than print it undefined.
    pub needs_input: bool,
    /// In the step's JSON object even without its input (null then).
    pub null_in_json: bool,
    /// Whether the figure applies to the stage at all (None: always): one
    /// that does not is left out of the JSON and text reports.
    pub applies: Option<fn(&Evaluation) -> bool>,
    /// Above this value the text reads "> value" (a rejection past what
    /// any real stage holds).
    pub ceiling: Option<f64>,
    read: fn(&Evaluation) -> Option<f64>,
}

/// What a figure is for one stage.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Reading {
    Value(f64),
    /// Undefined (no crossover, open, …).
    Undefined,
    /// A closed-loop figure of an unstable stage.
    Unstable,
}

impl Reading {
    pub fn value(self) -> Option<f64> {
        match self {
            Reading::Value(v) => Some(v),
            _ => None,
        }
    }
}

const fn fig(
    key: &'static str,
    label: &'static str,
    short: &'static str,
    unit: Unit,
    section: Section,
    shown: Shown,
    read: fn(&Evaluation) -> Option<f64>,
) -> Figure {
    Figure {
        key,
        label,
        short,
        unit,
        section,
        shown,
        closed_loop: false,
        margin: false,
        at_probe: false,
        undefined: "none",
        needs_input: false,
        null_in_json: false,
        applies: None,
        ceiling: None,
        read,
    }
}

impl Figure {
    const fn closed_loop(mut self) -> Figure {
        self.closed_loop = true;
        self
    }
    const fn margin(mut self) -> Figure {
        self.margin = true;
        self
    }
    const fn at_probe(mut self) -> Figure {
        self.at_probe = true;
        self
    }
    /// A DC-error or signal-limit figure: closed-loop, and left out of the
    /// text report without its inputs.
    const fn given(mut self) -> Figure {
        self.needs_input = true;
        self.closed_loop = true;
        self
    }
    /// Kept (null) in the step's JSON object when its input is not given.
    const fn null_in_json(mut self) -> Figure {
        self.null_in_json = true;
        self
    }
    /// A figure of a stage with two inputs only.
    const fn two_inputs(mut self) -> Figure {
        self.applies = Some(|e| e.analysis.cm_gain_dc.is_some());
        self
    }
    const fn ceiling(mut self, v: f64) -> Figure {
        self.ceiling = Some(v);
        self
    }
    const fn undefined(mut self, text: &'static str) -> Figure {
        self.undefined = text;
        self
    }
}

use Section::{DcErrors, Gain, Impedance, Kick, Loop, Noise, SignalLimits, Step, Supply};
use Unit::*;

/// Every scalar figure, in JSON and report order.
pub static FIGURES: [Figure; 62] = [
    fig(
        "nominal_gain",
        "nominal gain",
        "nominal",
        Ratio,
        Gain,
        REPORT,
        |e| Some(e.analysis.nominal_gain),
    ),
    fig(
        "ideal_gain",
        "network gain",
        "network",
        Ratio,
        Gain,
        REPORT,
        |e| Some(e.analysis.ideal_gain),
    ),
    fig("dc_gain", "DC gain", "gain", Ratio, Gain, ALL_VIEWS, |e| {
        Some(e.analysis.dc_gain)
    })
    .closed_loop(),
    fig(
        "gain_error",
        "gain error",
        "error",
        Fraction,
        Gain,
        ALL_VIEWS,
        |e| Some(e.analysis.gain_error),
    )
    .closed_loop(),
    fig(
        "cm_gain_dc",
        "common-mode gain",
        "A_cm",
        Ratio,
        Gain,
        REPORT,
        |e| e.analysis.cm_gain_dc,
    )
    .closed_loop()
    .two_inputs(),
    fig(
        "cmrr_dc_db",
        "CMRR at DC",
        "CMRR",
        Db,
        Gain,
        CMRR_SHOWN,
        |e| e.analysis.cmrr_dc_db.filter(|v| v.is_finite()),
    )
    .closed_loop()
    .two_inputs()
    .ceiling(CMRR_CEILING_DB)
    .undefined("unbounded (the common-mode gain is below 1e-12 of the differential)"),
    fig(
        "target_error",
        "error vs target",
        "vs aim",
        Fraction,
        Gain,
        REPORT,
        |e| e.analysis.target_error,
    )
    .given(),
    fig(
        "f_3db_hz",
        "f−3dB",
        "f-3dB",
        Si("Hz"),
        Gain,
        ALL_VIEWS,
        |e| e.analysis.f_3db_hz,
    )
    .closed_loop(),
    fig("peaking_db", "peaking", "peak", Db, Gain, ALL_VIEWS, |e| {
        Some(e.analysis.peaking_db)
    })
    .closed_loop(),
    fig(
        "crossover_hz",
        "crossover",
        "fc",
        Si("Hz"),
        Loop,
        REPORT,
        |e| e.analysis.crossover_hz,
    ),
    fig(
        "phase_margin_deg",
        "phase margin",
        "PM",
        Degrees,
        Loop,
        ALL_VIEWS,
        |e| e.analysis.phase_margin_deg,
    )
    .margin(),
    fig(
        "gain_margin_db",
        "gain margin",
        "GM",
        Db,
        Loop,
        ALL_VIEWS,
        |e| e.analysis.gain_margin_db,
    )
    .margin()
    .undefined("none (phase never reaches −180° in the sweep)"),
    fig(
        "phase_180_hz",
        "phase −180° at",
        "f180",
        Si("Hz"),
        Loop,
        TEXT_ONLY,
        |e| e.analysis.phase_180_hz,
    ),
    fig(
        "loop_gain_dc",
        "DC loop gain",
        "loop",
        Ratio,
        Loop,
        REPORT,
        |e| Some(e.analysis.loop_gain_dc),
    ),
    fig(
        "zout_dc_ohm",
        "Zout at DC",
        "Zout DC",
        Si("Ω"),
        Impedance,
        ALL_VIEWS,
        |e| Some(e.analysis.zout_dc_ohm),
    )
    .closed_loop(),
    fig(
        "zin_dc_ohm",
        "Zin at DC",
        "Zin DC",
        Si("Ω"),
        Impedance,
        REPORT,
        |e| e.analysis.zin_dc_ohm,
    )
    .closed_loop()
    .undefined("open (no DC path, or above 1 PΩ)"),
    fig(
        "zin1_dc_ohm",
        "Zin 1 at DC",
        "Zin1 DC",
        Si("Ω"),
        Impedance,
        REPORT,
        |e| e.analysis.zin1_dc_ohm,
    )
    .closed_loop()
    .two_inputs()
    .undefined("open (no DC path, or above 1 PΩ)"),
    fig(
        "zin2_dc_ohm",
        "Zin 2 at DC",
        "Zin2 DC",
        Si("Ω"),
        Impedance,
        REPORT,
        |e| e.analysis.zin2_dc_ohm,
    )
    .closed_loop()
    .two_inputs()
    .undefined("open (no DC path, or above 1 PΩ)"),
    fig(
        "zout_1khz_ohm",
        "|Zout| at 1 kHz",
        "Zout@{f}",
        Si("Ω"),
        Impedance,
        ALL_VIEWS,
        |e| e.analysis.zout_1khz_ohm,
    )
    .closed_loop()
    .at_probe(),
    fig(
        "zout_at_ohm",
        "|Zout| at the spec's frequency",
        "Zout spec",
        Si("Ω"),
        Impedance,
        REPORT,
        |e| e.analysis.zout_at_ohm,
    )
    .given(),
    fig(
        "noise_density_1khz",
        "density at 1 kHz",
        "en@1k",
        Si("V/√Hz"),
        Noise,
        REPORT,
        |e| Some(e.analysis.noise_density_1khz),
    )
    .closed_loop(),
    fig(
        "noise_rms",
        "noise rms",
        "noise rms",
        Si("V"),
        Noise,
        ALL_VIEWS,
        |e| Some(e.analysis.noise_rms),
    )
    .closed_loop(),
    fig(
        "noise_current_density_1khz",
        "input noise 1 kHz",
        "in@1k",
        Si("A/√Hz"),
        Noise,
        REPORT,
        |e| e.analysis.noise_current_density_1khz,
    )
    .given(),
    fig(
        "noise_current_rms",
        "input noise rms",
        "in rms",
        Si("A"),
        Noise,
        REPORT,
        |e| e.analysis.noise_current_rms,
    )
    .given(),
    fig(
        "warnings",
        "warnings",
        "warn",
        Count,
        Noise,
        KEY_ONLY,
        |e| Some(e.warnings.len() as f64),
    ),
    fig(
        "supply_rejection_db",
        "supply rejection",
        "sup rej",
        Db,
        Supply,
        REPORT_ROW,
        |e| e.analysis.supply_rejection_db,
    )
    .given(),
    fig(
        "ripple_out_v",
        "ripple at load",
        "ripple",
        Si("V"),
        Supply,
        REPORT_ROW,
        |e| e.analysis.ripple_out_v,
    )
    .given(),
    fig(
        "out_bias_v",
        "bias error at load",
        "bias",
        Si("V"),
        DcErrors,
        REPORT,
        |e| e.analysis.limits.out_bias_v,
    )
    .given(),
    fig(
        "out_offset_max_v",
        "offset, worst case",
        "offset",
        Si("V"),
        DcErrors,
        REPORT,
        |e| e.analysis.limits.out_offset_max_v,
    )
    .given(),
    fig(
        "out_dc_v",
        "DC at load",
        "out DC",
        Si("V"),
        DcErrors,
        REPORT,
        |e| e.analysis.limits.out_dc_v,
    )
    .given(),
    fig(
        "bias_balance_ohm",
        "bias balance r",
        "rbal",
        Si("Ω"),
        DcErrors,
        REPORT,
        |e| e.analysis.limits.bias_balance_ohm,
    )
    .given(),
    fig(
        "int_dc_v",
        "internal DC",
        "int DC",
        Si("V"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.int_dc_v,
    )
    .given(),
    fig(
        "int_peak_v",
        "internal peak",
        "int pk",
        Si("V"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.int_peak_v,
    )
    .given(),
    fig(
        "int_low_v",
        "internal low",
        "int lo",
        Si("V"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.int_low_v,
    )
    .given(),
    fig(
        "int_high_v",
        "internal high",
        "int hi",
        Si("V"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.int_high_v,
    )
    .given(),
    fig(
        "headroom_low_v",
        "headroom − rail",
        "room−",
        Si("V"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.headroom_low_v,
    )
    .given(),
    fig(
        "headroom_high_v",
        "headroom + rail",
        "room+",
        Si("V"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.headroom_high_v,
    )
    .given(),
    fig(
        "cm_low_v",
        "+ input low",
        "cm lo",
        Si("V"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.cm_low_v,
    )
    .given(),
    fig(
        "cm_high_v",
        "+ input high",
        "cm hi",
        Si("V"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.cm_high_v,
    )
    .given(),
    fig(
        "cm_headroom_v",
        "common-mode room",
        "cm room",
        Si("V"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.cm_headroom_v,
    )
    .given(),
    fig(
        "slew_needed_v_per_s",
        "slew needed",
        "slew",
        Si("V/s"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.slew_needed_v_per_s,
    )
    .given(),
    fig(
        "fpbw_hz",
        "full-power bw",
        "fpbw",
        Si("Hz"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.fpbw_hz,
    )
    .given(),
    fig(
        "iout_peak_a",
        "output current",
        "iout",
        Si("A"),
        SignalLimits,
        REPORT,
        |e| e.analysis.limits.iout_peak_a,
    )
    .given(),
    fig(
        "headroom_v",
        "headroom",
        "room",
        Si("V"),
        SignalLimits,
        ROW_IF_GIVEN,
        |e| {
            let l = &e.analysis.limits;
            Some(l.headroom_low_v?.min(l.headroom_high_v?))
        },
    )
    .given(),
    fig(
        "offset_v",
        "offset",
        "offset",
        Si("V"),
        DcErrors,
        ROW_IF_GIVEN,
        |e| e.analysis.limits.out_offset_max_v,
    )
    .given(),
    fig("size_v", "step size", "step", Si("V"), Step, REPORT, |e| {
        Some(e.analysis.step.size_v)
    }),
    fig(
        "final_v",
        "final value",
        "final",
        Si("V"),
        Step,
        REPORT,
        |e| e.analysis.step.final_v,
    )
    .closed_loop()
    .undefined("none (the response does not settle)"),
    fig(
        "rise_s",
        "rise 10–90 %",
        "rise",
        Si("s"),
        Step,
        REPORT,
        |e| e.analysis.step.rise_s,
    )
    .closed_loop()
    .undefined("none (never reaches 90 %)"),
    fig(
        "overshoot_pct",
        "overshoot",
        "overshoot",
        Percent,
        Step,
        ALL_VIEWS,
        |e| e.analysis.step.overshoot_pct,
    )
    .closed_loop(),
    fig(
        "peak_time_s",
        "peak at",
        "tpeak",
        Si("s"),
        Step,
        REPORT,
        |e| e.analysis.step.peak_time_s,
    )
    .closed_loop()
    .undefined("none (no overshoot)"),
    fig(
        "settle_1pct_s",
        "settling to 1 %",
        "ts 1%",
        Si("s"),
        Step,
        REPORT,
        |e| e.analysis.step.settle_s[0],
    )
    .closed_loop()
    .undefined("none (does not settle)"),
    fig(
        "settle_01pct_s",
        "settling to 0.1 %",
        "ts 0.1%",
        Si("s"),
        Step,
        ALL_VIEWS,
        |e| e.analysis.step.settle_s[1],
    )
    .closed_loop()
    .undefined("none (does not settle)"),
    fig(
        "settle_001pct_s",
        "settling to 0.01 %",
        "ts 0.01%",
        Si("s"),
        Step,
        REPORT,
        |e| e.analysis.step.settle_s[2],
    )
    .closed_loop()
    .undefined("none (does not settle)"),
    fig(
        "settle_to_s",
        "settling to target",
        "ts aim",
        Si("s"),
        Step,
        REPORT_ROW,
        |e| e.analysis.step.settle_to_s,
    )
    .given()
    .null_in_json()
    .undefined("none (does not settle to its threshold)"),
    fig(
        "slew_limited",
        "slew-limited",
        "slewing",
        Flag,
        Step,
        REPORT,
        |e| e.analysis.step.slew_limited.map(|b| f64::from(u8::from(b))),
    )
    .closed_loop(),
    fig(
        "clipped",
        "held at a rail",
        "clipped",
        Flag,
        Step,
        REPORT,
        |e| e.analysis.step.clipped.map(|b| f64::from(u8::from(b))),
    )
    .closed_loop(),
    fig(
        "current_limited",
        "current-limited",
        "ilimit",
        Flag,
        Step,
        REPORT,
        |e| {
            e.analysis
                .step
                .current_limited
                .map(|b| f64::from(u8::from(b)))
        },
    )
    .given(),
    fig(
        "kick_dip_v",
        "load dip",
        "dip",
        Si("V"),
        Kick,
        REPORT,
        |e| e.analysis.kick.as_ref().and_then(|k| k.dip_v),
    )
    .given(),
    fig(
        "kick_error_v",
        "error at acquire",
        "kick err",
        Si("V"),
        Kick,
        REPORT,
        |e| e.analysis.kick.as_ref().and_then(|k| k.error_v),
    )
    .given(),
    fig(
        "kick_error_lsb",
        "error in LSB",
        "kick",
        Lsb,
        Kick,
        REPORT_ROW,
        |e| e.analysis.kick.as_ref().and_then(|k| k.error_lsb),
    )
    .given(),
    fig(
        "kick_settle_s",
        "within ½ LSB after",
        "t ½LSB",
        Si("s"),
        Kick,
        REPORT,
        |e| e.analysis.kick.as_ref().and_then(|k| k.settle_s),
    )
    .given(),
    fig(
        "kick_dc_error_v",
        "DC error at rate",
        "kick dc",
        Si("V"),
        Kick,
        REPORT,
        |e| e.analysis.kick.as_ref().and_then(|k| k.dc_error_v),
    )
    .given(),
];

/// The key figures, in order.
pub fn key_figures() -> impl Iterator<Item = &'static Figure> {
    FIGURES.iter().filter(|f| f.shown.key_figure)
}

/// The figures the workbench row adds when a stage defines them.
pub fn row_figures() -> impl Iterator<Item = &'static Figure> {
    FIGURES.iter().filter(|f| f.shown.row_when_given)
}

/// The figure with this key.
pub fn figure(key: &str) -> Option<&'static Figure> {
    FIGURES.iter().find(|f| f.key == key)
}

/// A fixed-point number without a negative zero.
fn fixed(v: f64, decimals: usize, signed: bool) -> String {
    let text = format!("{v:.decimals$}");
    let zero = text
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.');
    let text = if zero {
        text.trim_start_matches('-').to_string()
    } else {
        text
    };
    if signed && !text.starts_with('-') {
        format!("+{text}")
    } else {
        text
    }
}

/// A transimpedance in engineering notation to four significant digits
/// with its level in dBΩ: "−1.000 MΩ (120.0 dBΩ)".
fn ohms_and_db(v: f64, signed: bool) -> String {
    let db = 20.0 * v.abs().log10();
    format!("{} ({} dBΩ)", ohms(v, signed), fixed(db, 1, false))
        .replace('Ω', &crate::model::values::spelled("Ω"))
}

/// A transimpedance to four significant digits, trailing zeros kept
/// ("−1.000 MΩ"; a minus sign, or "-" in ASCII spelling).
fn ohms(v: f64, signed: bool) -> String {
    const PREFIXES: [&str; 9] = ["p", "n", "µ", "m", "", "k", "M", "G", "T"];
    let a = v.abs();
    let mut exp3 = if a > 0.0 {
        (a.log10() / 3.0).floor() as i32
    } else {
        0
    };
    exp3 = exp3.clamp(-4, 4);
    let mut m = a / 10f64.powi(3 * exp3);
    if (m * 1000.0).round() / 1000.0 >= 1000.0 && exp3 < 4 {
        exp3 += 1;
        m /= 1000.0;
    }
    let digits = match m {
        x if x >= 100.0 => 1,
        x if x >= 10.0 => 2,
        _ => 3,
    };
    let minus = if crate::model::values::ascii_units() {
        "-"
    } else {
        "−"
    };
    let sign = match (v < 0.0, signed && v > 0.0) {
        (true, _) => minus,
        (false, true) => "+",
        _ => "",
    };
    let prefix = crate::model::values::spelled(PREFIXES[(exp3 + 4) as usize]);
    format!(
        "{sign}{m:.digits$} {prefix}{}",
        crate::model::values::spelled("Ω")
    )
}

impl Figure {
    /// Whether the figure is the stage's gain read in ohms: a gain figure
    /// of a stage whose gain is in V/A.
    fn in_ohms(&self, e: &Evaluation) -> bool {
        self.unit == Ratio && self.section == Gain && e.analysis.gain_unit == GainUnit::VoltsPerAmp
    }

    /// The figure's name for this stage: a transimpedance stage's DC gain
    /// is its transimpedance.
    pub fn label_in(&self, e: &Evaluation) -> &'static str {
        self.label_for(e.analysis.gain_unit)
    }

    /// The figure's name for a stage whose gain is in `u`.
    pub fn label_for(&self, u: GainUnit) -> &'static str {
        match self.key {
            "dc_gain" if u == GainUnit::VoltsPerAmp => "transimpedance",
            _ => self.label,
        }
    }

    /// The figure's unit for this stage: a gain in V/A reads in ohms, a
    /// current step in amperes.
    pub fn unit_in(&self, e: &Evaluation) -> Unit {
        self.unit_for(e.analysis.gain_unit)
    }

    /// The figure's unit for a stage whose gain is in `u`.
    pub fn unit_for(&self, u: GainUnit) -> Unit {
        let amps = u == GainUnit::VoltsPerAmp;
        match self.key {
            _ if amps && self.unit == Ratio && self.section == Gain => Si("Ω"),
            "size_v" if amps => Si("A"),
            _ => self.unit,
        }
    }

    /// [`Figure::text`] in this stage's unit.
    pub fn text_in(&self, e: &Evaluation, r: Reading) -> String {
        match r {
            Reading::Value(v) if self.in_ohms(e) && v != 0.0 => ohms_and_db(v, false),
            Reading::Value(v) if self.unit_in(e) != self.unit => self.unit_in(e).number(v, false),
            _ => self.text(r),
        }
    }

    /// [`Figure::cell`] in this stage's unit.
    pub fn cell_in(&self, e: &Evaluation, r: Reading, signed: bool) -> String {
        match r {
            Reading::Value(v) if self.in_ohms(e) => ohms(v, signed).replace(' ', ""),
            Reading::Value(v) if self.unit_in(e) != self.unit => self.unit_in(e).cell(v, signed),
            // Unbounded (a rejection figure of a stage it applies to): the
            // figure's own word for it.
            Reading::Undefined
                if !signed
                    && self.ceiling.is_some()
                    && self.applies.is_some()
                    && self.applies_to(e) =>
            {
                self.undefined_word().into()
            }
            _ => self.cell(r, signed),
        }
    }

    /// The undefined text's first words, before its explanation in
    /// parentheses: what a narrow column says ("none", "open",
    /// "unbounded").
    pub fn undefined_word(&self) -> &'static str {
        self.undefined.split(" (").next().unwrap_or(self.undefined)
    }

    /// A reading in a narrow column (`compare`) for a stage whose gain is
    /// in `u`: the number ("> ceiling" past it), the figure's undefined
    /// word, or "unstable".
    pub fn column(&self, u: GainUnit, r: Reading) -> String {
        match r {
            Reading::Value(v) if self.ceiling.is_some_and(|c| v > c) => self.text(r),
            Reading::Value(v) => self.number_for(u, v, false),
            Reading::Undefined => self.undefined_word().into(),
            Reading::Unstable => "unstable".into(),
        }
    }

    /// How the figure's values read in a stage whose gain is in `u`, where
    /// a value may be unbounded (see [`Reads`]).
    pub fn reads_for(&self, u: GainUnit) -> Reads {
        Reads {
            unit: self.unit_for(u),
            unbounded: self.undefined_word(),
            ceiling: self.ceiling,
        }
    }

    /// [`Figure::number`] for a stage whose gain is in `u`.
    pub fn number_for(&self, u: GainUnit, v: f64, signed: bool) -> String {
        let amps = u == GainUnit::VoltsPerAmp;
        match self.key {
            _ if amps && self.unit == Ratio && self.section == Gain => ohms(v, signed),
            "size_v" if amps => Si("A").number(v, signed),
            _ => self.number(v, signed),
        }
    }

    /// Whether the figure reads in different units in two stages (a gain
    /// in V/V against one in V/A): their difference means nothing.
    pub fn units_differ(&self, a: GainUnit, b: GainUnit) -> bool {
        a != b && ((self.unit == Ratio && self.section == Gain) || self.key == "size_v")
    }

    /// The figure of one evaluated stage.
    pub fn read(&self, e: &Evaluation) -> Reading {
        self.read_value(e, (self.read)(e))
    }

    /// The figure from a given value (for one the caller solved itself,
    /// such as |Zout| at the workbench's chosen frequency).
    pub fn read_value(&self, e: &Evaluation, v: Option<f64>) -> Reading {
        let misleading = self.margin && v.is_some_and(|v| v > 0.0);
        // A figure whose inputs are not given is undefined, stable or not.
        let given = !(self.needs_input && v.is_none());
        if (self.closed_loop || misleading) && given && e.analysis.unstable() {
            return Reading::Unstable;
        }
        v.filter(|v| v.is_finite())
            .map_or(Reading::Undefined, Reading::Value)
    }

    /// Whether the figure applies to this stage (see [`Figure::applies`]).
    pub fn applies_to(&self, e: &Evaluation) -> bool {
        self.applies.is_none_or(|f| f(e))
    }

    /// The value for JSON: null where undefined or unstable.
    pub fn json(&self, e: &Evaluation) -> Option<f64> {
        self.read(e).value()
    }

    /// The JSON value itself: a number, true/false for a flag, or null.
    pub fn json_value(&self, e: &Evaluation) -> serde_json::Value {
        match (self.json(e), self.unit) {
            (Some(v), Flag) => serde_json::Value::Bool(v != 0.0),
            (Some(v), _) => serde_json::json!(v),
            (None, _) => serde_json::Value::Null,
        }
    }

    /// The number alone, at the precision of the text views; `signed`
    /// puts a + before positive values (differences).
    pub fn number(&self, v: f64, signed: bool) -> String {
        self.unit.number(v, signed)
    }

    /// The text report's value: the number, "unstable" or the figure's
    /// undefined text; ratios also in dB.
    pub fn text(&self, r: Reading) -> String {
        match r {
            Reading::Value(v) if self.unit == Ratio && v != 0.0 => {
                format!(
                    "{} ({} dB)",
                    self.number(v, false),
                    fixed(20.0 * v.abs().log10(), 1, false)
                )
            }
            Reading::Value(v) if self.ceiling.is_some_and(|c| v > c) => {
                format!("> {}", self.number(self.ceiling.unwrap_or(v), false))
            }
            Reading::Value(v) => self.number(v, false),
            Reading::Undefined => self.undefined.into(),
            Reading::Unstable => "unstable".into(),
        }
    }

    /// A compact cell for the figures row (no space before the unit);
    /// above its ceiling "> ceiling" (a difference is never cut).
    pub fn cell(&self, r: Reading, signed: bool) -> String {
        match (r, self.ceiling) {
            (Reading::Value(v), Some(c)) if !signed && v > c => {
                format!(">{}", self.unit.cell(c, false))
            }
            (Reading::Value(v), _) => self.unit.cell(v, signed),
            (Reading::Unstable, _) => "unstable".into(),
            (Reading::Undefined, _) => "—".into(),
        }
    }
}

impl Unit {
    /// A number of this unit at the precision of the text views; `signed`
    /// puts a + before positive values (differences).
    pub fn number(self, v: f64, signed: bool) -> String {
        let sign = if signed && v > 0.0 { "+" } else { "" };
        match self {
            Ratio => fixed(v, 6, signed),
            Fraction => format!("{} %", fixed(v * 100.0, 4, signed)),
            Db => format!("{} dB", fixed(v, 2, signed)),
            Degrees => format!("{}{}", fixed(v, 1, signed), spelled("°")),
            Count => fixed(v, 0, signed),
            Percent => format!("{} %", fixed(v, 3, signed)),
            Flag => if v != 0.0 { "yes" } else { "no" }.into(),
            Lsb => format!("{} LSB", fixed(v, 3, signed)),
            Si(u) => format!("{sign}{}", fmt_eng(v, u)),
        }
    }

    /// A compact number of this unit (no space before the unit).
    pub fn cell(self, v: f64, signed: bool) -> String {
        match self {
            Ratio => fixed(v, 4, signed),
            Fraction => format!("{}%", fixed(v * 100.0, 3, signed)),
            Db => format!("{}dB", fixed(v, 1, signed)),
            Degrees => format!("{}{}", fixed(v, 0, signed), spelled("°")),
            Count => fixed(v, 0, signed),
            Percent => format!("{}%", fixed(v, 2, signed)),
            Flag => if v != 0.0 { "yes" } else { "no" }.into(),
            Lsb => format!("{}LSB", fixed(v, 2, signed)),
            Si(u) => {
                let text = fmt_eng(v.abs(), u).replace(' ', "");
                match (v < 0.0, signed) {
                    (true, _) => format!("-{text}"),
                    (false, true) => format!("+{text}"),
                    (false, false) => text,
                }
            }
        }
    }
}

/// How a figure's values read where a value may be past every number: a
/// spread keeps an unbounded CMRR as +∞ (so that it passes a minimum), and
/// +∞ reads as the figure's own word for it (its undefined word,
/// "unbounded"); a value that is not a number reads "—".
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Reads {
    pub unit: Unit,
    /// The figure's word for +∞.
    pub unbounded: &'static str,
    /// Above it a value reads "> ceiling" (not a difference).
    pub ceiling: Option<f64>,
}

impl Reads {
    /// A unit's values with no word of their own for +∞ ("none").
    pub fn plain(unit: Unit) -> Reads {
        Reads {
            unit,
            unbounded: "none",
            ceiling: None,
        }
    }

    /// [`Unit::number`], or the word for a value that is not finite.
    pub fn number(self, v: f64, signed: bool) -> String {
        match self.ceiling {
            Some(c) if !signed && v.is_finite() && v > c => {
                format!("> {}", self.unit.number(c, false))
            }
            _ => self.finite(v, |v| self.unit.number(v, signed)),
        }
    }

    /// [`Unit::cell`], or the word for a value that is not finite.
    pub fn cell(self, v: f64, signed: bool) -> String {
        match self.ceiling {
            Some(c) if !signed && v.is_finite() && v > c => {
                format!(">{}", self.unit.cell(c, false))
            }
            _ => self.finite(v, |v| self.unit.cell(v, signed)),
        }
    }

    fn finite(self, v: f64, text: impl Fn(f64) -> String) -> String {
        match v {
            f64::INFINITY => self.unbounded.into(),
            v if v.is_finite() => text(v),
            _ => "—".into(),
        }
    }
}

/// B − A of a figure, where both are defined.
pub fn delta(f: &Figure, a: &Evaluation, b: &Evaluation) -> Option<f64> {
    if f.units_differ(a.analysis.gain_unit, b.analysis.gain_unit) {
        return None;
    }
    match (f.read(a), f.read(b)) {
        // Past the ceiling the value is only "more than": no difference.
        (Reading::Value(x), Reading::Value(y)) if f.ceiling.is_some_and(|c| x > c || y > c) => None,
        (Reading::Value(x), Reading::Value(y)) => Some(y - x).filter(|d| d.is_finite()),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_are_unique() {
        for (i, f) in FIGURES.iter().enumerate() {
            assert!(FIGURES[..i].iter().all(|g| g.key != f.key), "{}", f.key);
            assert_eq!(figure(f.key).map(|g| g.key), Some(f.key));
        }
    }

    #[test]
    fn no_negative_zero() {
        assert_eq!(fixed(-0.00001, 2, false), "0.00");
        assert_eq!(fixed(-0.00001, 2, true), "+0.00");
        assert_eq!(fixed(-1.5, 1, true), "-1.5");
    }
}
