//! The parameter pane's rows: how each scenario field is shown, stepped and
//! typed. Pure data over the scenario; no drawing here.

use crate::engine::eseries::{Series, CAPACITOR_SERIES};
use crate::engine::scenario::{present, Scenario, Topology};
use crate::engine::values::{fmt_compact, fmt_eng, fmt_eng_sig, parse_value};

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Group {
    Stage,
    Amplifier,
    SourceLoad,
    Environment,
}

impl Group {
    pub fn title(self) -> &'static str {
        match self {
            Group::Stage => "Stage",
            Group::Amplifier => "Amplifier",
            Group::SourceLoad => "Source and load",
            Group::Environment => "Environment",
        }
    }
}

/// Every editable field.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Param {
    Topology,
    Rg,
    Rf,
    Cf,
    Riso,
    Series,
    Tolerance,
    A0,
    Gbw,
    Fp2,
    Rin,
    Cin,
    Ro,
    Vnoise,
    VnoiseCorner,
    Inoise,
    InoiseCorner,
    SourceR,
    LoadR,
    LoadC,
    TempC,
    BandLo,
    BandHi,
}

pub const ALL: [Param; 23] = [
    Param::Topology,
    Param::Rg,
    Param::Rf,
    Param::Cf,
    Param::Riso,
    Param::Series,
    Param::Tolerance,
    Param::A0,
    Param::Gbw,
    Param::Fp2,
    Param::Rin,
    Param::Cin,
    Param::Ro,
    Param::Vnoise,
    Param::VnoiseCorner,
    Param::Inoise,
    Param::InoiseCorner,
    Param::SourceR,
    Param::LoadR,
    Param::LoadC,
    Param::TempC,
    Param::BandLo,
    Param::BandHi,
];

/// How a value moves when stepped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Step {
    /// A real resistor: the stage's E-series.
    Resistor,
    /// A capacitor: E12.
    Capacitor,
    /// A model number: 1-2-5 per decade.
    OneTwoFive,
    /// Fixed additive step.
    Add(i32),
    Tolerance,
    Choice,
}

impl Param {
    pub fn group(self) -> Group {
        use Param::*;
        match self {
            Topology | Rg | Rf | Cf | Riso | Series | Tolerance => Group::Stage,
            A0 | Gbw | Fp2 | Rin | Cin | Ro | Vnoise | VnoiseCorner | Inoise | InoiseCorner => {
                Group::Amplifier
            }
            SourceR | LoadR | LoadC => Group::SourceLoad,
            TempC | BandLo | BandHi => Group::Environment,
        }
    }

    pub fn label(self) -> &'static str {
        use Param::*;
        match self {
            Topology => "topology",
            Rg => "rg",
            Rf => "rf",
            Cf => "cf",
            Riso => "riso",
            Series => "series",
            Tolerance => "tolerance",
            A0 => "a0",
            Gbw => "gbw",
            Fp2 => "fp2",
            Rin => "rin",
            Cin => "cin",
            Ro => "ro",
            Vnoise => "en",
            VnoiseCorner => "en corner",
            Inoise => "in",
            InoiseCorner => "in corner",
            SourceR => "source r",
            LoadR => "load r",
            LoadC => "load c",
            TempC => "temp",
            BandLo => "band from",
            BandHi => "band to",
        }
    }

    fn unit(self) -> &'static str {
        use Param::*;
        match self {
            Rg | Rf | Riso | Rin | Ro | SourceR | LoadR => "Ω",
            Cf | Cin | LoadC => "F",
            Gbw | Fp2 | VnoiseCorner | InoiseCorner | BandLo | BandHi => "Hz",
            Vnoise => "V/√Hz",
            Inoise => "A/√Hz",
            _ => "",
        }
    }

    fn step_kind(self) -> Step {
        use Param::*;
        match self {
            Rg | Rf | Riso => Step::Resistor,
            Cf | Cin | LoadC => Step::Capacitor,
            TempC => Step::Add(5),
            Tolerance => Step::Tolerance,
            Topology | Series => Step::Choice,
            _ => Step::OneTwoFive,
        }
    }

    /// Whether the field may be absent (shown as "none").
    fn optional(self) -> bool {
        use Param::*;
        matches!(
            self,
            Cf | Riso | Fp2 | Rin | Cin | VnoiseCorner | InoiseCorner | LoadR | LoadC
        )
    }

    /// Whether the row applies to this topology (a follower has no rg).
    pub fn applies(self, s: &Scenario) -> bool {
        !(self == Param::Rg && s.stage.topology == Topology::Follower)
    }

    /// Whether the value is a real resistor that should sit on the series.
    pub fn is_resistor(self) -> bool {
        self.step_kind() == Step::Resistor
    }

    /// The numeric value, None when absent.
    pub fn get(self, s: &Scenario) -> Option<f64> {
        use Param::*;
        let st = &s.stage;
        let a = &s.amp;
        match self {
            Topology | Series => None,
            Rg => st.rg,
            Rf => st.rf.filter(|v| *v > 0.0),
            Cf => present(st.cf),
            Riso => present(st.riso),
            Tolerance => Some(st.tolerance),
            A0 => Some(a.a0),
            Gbw => Some(a.gbw),
            Fp2 => a.fp2,
            Rin => a.rin,
            Cin => present(a.cin),
            Ro => Some(a.ro),
            Vnoise => Some(a.vnoise),
            VnoiseCorner => present(a.vnoise_corner),
            Inoise => Some(a.inoise),
            InoiseCorner => present(a.inoise_corner),
            SourceR => Some(s.source.r),
            LoadR => s.load.r,
            LoadC => present(s.load.c),
            TempC => Some(s.temp_c),
            BandLo => Some(s.band.0),
            BandHi => Some(s.band.1),
        }
    }

    /// Set the numeric value (None = absent, for optional fields).
    pub fn set(self, s: &mut Scenario, v: Option<f64>) {
        use Param::*;
        let st = &mut s.stage;
        let a = &mut s.amp;
        match self {
            Topology | Series => {}
            Rg => st.rg = v,
            Rf => st.rf = v,
            Cf => st.cf = v,
            Riso => st.riso = v,
            Tolerance => st.tolerance = v.unwrap_or(st.tolerance),
            A0 => a.a0 = v.unwrap_or(a.a0),
            Gbw => a.gbw = v.unwrap_or(a.gbw),
            Fp2 => a.fp2 = v,
            Rin => a.rin = v,
            Cin => a.cin = v,
            Ro => a.ro = v.unwrap_or(a.ro),
            Vnoise => a.vnoise = v.unwrap_or(a.vnoise),
            VnoiseCorner => a.vnoise_corner = v,
            Inoise => a.inoise = v.unwrap_or(a.inoise),
            InoiseCorner => a.inoise_corner = v,
            SourceR => s.source.r = v.unwrap_or(s.source.r),
            LoadR => s.load.r = v,
            LoadC => s.load.c = v,
            TempC => s.temp_c = v.unwrap_or(s.temp_c),
            BandLo => s.band.0 = v.unwrap_or(s.band.0),
            BandHi => s.band.1 = v.unwrap_or(s.band.1),
        }
    }

    /// The value as shown in the pane, with its unit.
    pub fn display(self, s: &Scenario) -> String {
        match self {
            Param::Topology => s.stage.topology.name().to_string(),
            Param::Series => format!(
                "{} (±{} usual)",
                s.stage.series,
                pct(s.stage.series.usual_tolerance())
            ),
            Param::Tolerance => format!("±{}", pct(s.stage.tolerance)),
            Param::TempC => format!("{} °C", fmt_eng_sig(s.temp_c, "", 4)),
            Param::A0 => {
                let a0 = s.amp.a0;
                let text = fmt_eng_sig(a0, "", 3).replace(" ", "");
                format!("{text} ({:.0} dB)", 20.0 * a0.log10())
            }
            Param::Rf if s.stage.topology == Topology::Follower && self.get(s).is_none() => {
                "wire".into()
            }
            p => match p.get(s) {
                Some(v) => fmt_eng_sig(v, p.unit(), 4).replace(" ", ""),
                None => "none".into(),
            },
        }
    }

    /// Text to start an edit with (parses back to the same value).
    pub fn edit_text(self, s: &Scenario) -> String {
        match self {
            Param::Topology => s.stage.topology.name().into(),
            Param::Series => s.stage.series.name().into(),
            Param::Tolerance => format!("{}%", fmt_compact(s.stage.tolerance * 100.0)),
            p => p.get(s).map(fmt_compact).unwrap_or_default(),
        }
    }

    /// A short note on the series membership of a resistor, e.g. "E24" or
    /// "off E24".
    pub fn series_note(self, s: &Scenario) -> Option<(String, bool)> {
        if !self.is_resistor() {
            return None;
        }
        let v = self.get(s)?;
        let on = s.stage.series.contains(v);
        Some((s.stage.series.name().to_string(), on))
    }

    /// Apply typed text. Errors are a sentence for the status line.
    pub fn apply_text(self, s: &mut Scenario, text: &str) -> Result<(), String> {
        let t = text.trim();
        match self {
            Param::Topology => {
                let topo = [
                    Topology::NonInverting,
                    Topology::Inverting,
                    Topology::Follower,
                ]
                .into_iter()
                .find(|x| x.name().eq_ignore_ascii_case(t))
                .ok_or_else(|| {
                    format!("`{t}` is not a topology: NonInverting, Inverting or Follower")
                })?;
                set_topology(s, topo);
                return Ok(());
            }
            Param::Series => {
                s.stage.series = Series::parse(t)
                    .ok_or_else(|| format!("`{t}` is not a series: E3, E6 … E192"))?;
                return Ok(());
            }
            Param::Tolerance => {
                let (num, percent) = match t.strip_suffix('%') {
                    Some(n) => (n, true),
                    None => (t, false),
                };
                let v = parse_value(num).map_err(|e| e.to_string())?;
                let v = if percent || v >= 1.0 { v / 100.0 } else { v };
                s.stage.tolerance = v;
                return Ok(());
            }
            _ => {}
        }
        let follower_wire = self == Param::Rf && s.stage.topology == Topology::Follower;
        if (self.optional() || follower_wire)
            && (t.is_empty() || t.eq_ignore_ascii_case("none") || t.eq_ignore_ascii_case("wire"))
        {
            self.set(s, None);
            return Ok(());
        }
        let v = parse_value(t).map_err(|e| e.to_string())?;
        if self.optional() && v == 0.0 && !matches!(self, Param::LoadR | Param::Rin | Param::Fp2) {
            self.set(s, None);
            return Ok(());
        }
        self.set(s, Some(v));
        Ok(())
    }

    /// Step up (`up = true`) or down. Returns false when nothing moved.
    pub fn step(self, s: &mut Scenario, up: bool) -> bool {
        match self.step_kind() {
            Step::Choice => {
                match self {
                    Param::Topology => {
                        let t = if up {
                            s.stage.topology.cycle()
                        } else {
                            s.stage.topology.cycle().cycle()
                        };
                        set_topology(s, t);
                    }
                    _ => {
                        s.stage.series = if up {
                            s.stage.series.cycle()
                        } else {
                            (0..6).fold(s.stage.series, |x, _| x.cycle())
                        };
                    }
                }
                true
            }
            Step::Tolerance => {
                const T: [f64; 9] = [0.0005, 0.001, 0.0025, 0.005, 0.01, 0.02, 0.05, 0.1, 0.2];
                let cur = s.stage.tolerance;
                let next = if up {
                    T.iter().copied().find(|t| *t > cur * 1.0001)
                } else {
                    T.iter().rev().copied().find(|t| *t < cur * 0.9999)
                };
                match next {
                    Some(t) => {
                        s.stage.tolerance = t;
                        true
                    }
                    None => false,
                }
            }
            Step::Add(d) => {
                let v = self.get(s).unwrap_or(0.0);
                let n = if up { v + d as f64 } else { v - d as f64 };
                self.set(s, Some(n));
                true
            }
            kind => {
                let next = match self.get(s) {
                    None if up => Some(self.start_value(s)),
                    None => return false,
                    Some(v) => {
                        let stepped = match kind {
                            Step::Resistor => {
                                if up {
                                    s.stage.series.next_above(v)
                                } else {
                                    s.stage.series.next_below(v)
                                }
                            }
                            Step::Capacitor => {
                                if up {
                                    CAPACITOR_SERIES.next_above(v)
                                } else {
                                    CAPACITOR_SERIES.next_below(v)
                                }
                            }
                            _ => one_two_five(v, up),
                        };
                        Some(stepped)
                    }
                };
                self.set(s, next);
                true
            }
        }
    }

    /// Where stepping up from "none" starts.
    fn start_value(self, s: &Scenario) -> f64 {
        use Param::*;
        match self {
            Cf => 1e-12,
            Riso => 10.0,
            Fp2 => s.amp.gbw * 3.0,
            Rin => 1e6,
            Cin => 1e-12,
            VnoiseCorner | InoiseCorner => 10.0,
            LoadR => 10e3,
            LoadC => 100e-12,
            Rf => 1e3,
            Rg => 1e3,
            _ => 1.0,
        }
    }
}

fn pct(f: f64) -> String {
    format!("{}%", fmt_eng_sig(f * 100.0, "", 3))
}

/// Change topology, filling in what the new one needs.
pub fn set_topology(s: &mut Scenario, t: Topology) {
    s.stage.topology = t;
    if t != Topology::Follower {
        if s.stage.rg.is_none() {
            s.stage.rg = Some(1e3);
        }
        if s.stage.rf.filter(|v| *v > 0.0).is_none() {
            s.stage.rf = Some(10e3);
        }
    }
}

/// Next value of the 1-2-5 sequence above or below `v`.
pub fn one_two_five(v: f64, up: bool) -> f64 {
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

/// Snap every real resistor to its nearest series value.
pub fn snap_resistors(s: &mut Scenario) -> usize {
    let mut n = 0;
    for p in [Param::Rg, Param::Rf, Param::Riso] {
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

/// Compact text for a figure in a table cell (no space before the unit).
pub fn compact(v: f64, unit: &str) -> String {
    fmt_eng(v, unit).replace(' ', "")
}
