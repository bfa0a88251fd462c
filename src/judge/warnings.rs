//! Design warnings: rules of thumb a designer checks, each with a stable
//! code, a severity and a sentence carrying the numbers. [`RULES`] lists
//! them all, the large-signal ones of [`crate::judge::limit_rules`] too.

use crate::engine::netlist::NoiseKind;
use crate::judge::limit_rules;
pub use crate::judge::warning::*;
use crate::model::params::PARAMS;
use crate::model::scenario::{present, Feedback, Scenario};
use crate::model::values::fmt_eng;

/// Every rule, in the order their warnings are listed within a severity.
pub const RULES: &[Rule] = &[
    input_invalid,
    phase_margin,
    no_crossover,
    load_capacitance,
    peaking,
    gain_error,
    load_divider,
    resistor_noise,
    heavy_output_load,
    off_series,
    value_range,
    limit_rules::output_swing,
    limit_rules::input_range,
    limit_rules::slew,
    limit_rules::output_current,
    limit_rules::dc_offset,
    sample_kick,
    reference_imbalance,
];

/// All warnings for a scenario and its analysis, worst first.
pub fn check(cx: &Context) -> Vec<Warning> {
    let mut w = Vec::new();
    for rule in RULES {
        rule(cx, &mut w);
    }
    w.sort_by_key(|x| std::cmp::Reverse(x.severity));
    w
}

/// The sampling capacitor still more than half an LSB from the load's
/// level when the acquisition ends.
fn sample_kick(cx: &Context, w: &mut Vec<Warning>) {
    let Some(k) = cx.a.kick.as_ref() else {
        return;
    };
    let Some(lsb) = k.error_lsb.filter(|v| *v > KICK_WARN_LSB) else {
        return;
    };
    let when = match k.settle_s {
        Some(t) => format!("it is within half an LSB after {}", fmt_eng(t, "s")),
        None => "it does not come within half an LSB in the window".into(),
    };
    let text = format!(
        "the sampling capacitor is {lsb:.2} LSB ({}) off the load's level when the {} \
         acquisition ends; {when}: a larger load c, a smaller riso or a faster amplifier \
         recovers sooner",
        fmt_eng(k.error_v.unwrap_or(f64::NAN), "V"),
        fmt_eng(k.acquire_s, "s"),
    );
    push(w, Code::SampleKick, Severity::Warning, text);
}

fn parallel(rs: &[f64]) -> f64 {
    let g: f64 = rs.iter().filter(|r| r.is_finite()).map(|r| 1.0 / r).sum();
    if g > 0.0 {
        1.0 / g
    } else {
        f64::INFINITY
    }
}

fn input_invalid(cx: &Context, w: &mut Vec<Warning>) {
    for p in cx.problems {
        let text = format!("{}: {}", p.field, p.message);
        push(w, Code::InputInvalid, Severity::Severe, text);
    }
}

/// " with 1 nF load", or nothing without a load capacitance.
fn load_note(s: &Scenario) -> String {
    match present(s.load.c) {
        Some(c) => format!(" with {} load", fmt_eng(c, "F")),
        None => String::new(),
    }
}

/// The usual fix for a lack of phase margin, in plain words.
fn margin_fix(s: &Scenario) -> String {
    // A current-input stage: the maximally flat cf is the fix.
    if let Some(crate::model::stages::Flat::Cf(c)) = s.flat_cf() {
        return format!(
            "; a feedback capacitor near the maximally flat {} restores it (stabilize lists it)",
            crate::model::values::fmt_eng_sig(c, "F", 3)
        );
    }
    match (present(s.load.c), present(s.stage.riso)) {
        (Some(_), None) => {
            "; an isolation resistor before the load capacitance usually restores it"
        }
        (Some(_), Some(_)) => {
            "; a larger isolation resistor or a feedback capacitor usually restores it"
        }
        (None, _) => "; a feedback capacitor or a higher noise gain usually restores it",
    }
    .to_string()
}

/// A right-half-plane pole the margin does not show (it reads positive,
/// or there is none): the stage is unstable all the same.
fn hidden_instability(cx: &Context, w: &mut Vec<Warning>) {
    let a = cx.a;
    let reads = match a.phase_margin_deg {
        Some(pm) => format!("the phase margin reads {pm:.0}°"),
        None => "the loop gain shows no crossover".into(),
    };
    let growth = a.rightmost_pole_re().unwrap_or(0.0) / std::f64::consts::TAU;
    let text = format!(
        "the stage is unstable: a closed-loop pole lies in the right half-plane \
         (growing at {}) although {reads}{}{}",
        fmt_eng(growth, "Hz"),
        load_note(cx.s),
        margin_fix(cx.s)
    );
    push(w, Code::PhaseMargin, Severity::Severe, text);
}

fn phase_margin(cx: &Context, w: &mut Vec<Warning>) {
    let pm_at = cx.a.crossover_hz.zip(cx.a.phase_margin_deg);
    if cx.a.unstable() && pm_at.is_none_or(|(_, pm)| pm > 0.0) {
        return hidden_instability(cx, w);
    }
    let Some((fc, pm)) = pm_at else {
        return;
    };
    if pm >= PM_WARN_DEG {
        return;
    }
    let sev = if pm < PM_SEVERE_DEG {
        Severity::Severe
    } else {
        Severity::Warning
    };
    let what = if cx.a.unstable() {
        "the stage is unstable: phase margin"
    } else {
        "phase margin"
    };
    let text = format!(
        "{what} {pm:.0}° at {}{} (aim for at least {PM_WARN_DEG:.0}°){}",
        fmt_eng(fc, "Hz"),
        load_note(cx.s),
        margin_fix(cx.s)
    );
    push(w, Code::PhaseMargin, sev, text);
}

fn no_crossover(cx: &Context, w: &mut Vec<Warning>) {
    let a = cx.a;
    if a.crossover_hz.is_some() {
        return;
    }
    let edge =
        |p: Option<&crate::engine::analysis::Point>| fmt_eng(p.map_or(0.0, |p| p.f_hz), "Hz");
    let text = format!(
        "loop gain never crosses 1 between {} and {} (DC loop gain {:.3}): phase margin undefined",
        edge(a.sweep.points.first()),
        edge(a.sweep.points.last()),
        a.loop_gain_dc
    );
    push(w, Code::NoCrossover, Severity::Warning, text);
}

/// The classic trap: the load capacitance eats phase margin.
fn load_capacitance(cx: &Context, w: &mut Vec<Warning>) {
    let (Some(c), Some(pm), Some(bare)) = (
        present(cx.s.load.c),
        cx.a.phase_margin_deg,
        cx.a.phase_margin_without_load_c,
    ) else {
        return;
    };
    let cost = bare - pm;
    if cost < LOAD_C_INFO_DEG {
        return;
    }
    let sev = if cost >= LOAD_C_WARN_DEG {
        Severity::Warning
    } else {
        Severity::Info
    };
    let text = format!(
        "the {} load takes {cost:.0}° of phase margin ({pm:.0}° with it, {bare:.0}° \
         without); more cable or a bigger capacitor takes more{}",
        fmt_eng(c, "F"),
        margin_fix(cx.s)
    );
    push(w, Code::LoadCapacitance, sev, text);
}

fn peaking(cx: &Context, w: &mut Vec<Warning>) {
    let a = cx.a;
    if a.peaking_db <= PEAKING_WARN_DB || a.unstable() {
        return;
    }
    let sev = if a.peaking_db > PEAKING_SEVERE_DB {
        Severity::Severe
    } else {
        Severity::Warning
    };
    let roll = a
        .f_3db_hz
        .map(|f| format!(" before rolling off at {}", fmt_eng(f, "Hz")))
        .unwrap_or_default();
    let text = format!(
        "closed-loop gain peaks {:.1} dB above its DC value{roll}",
        a.peaking_db
    );
    push(w, Code::Peaking, sev, text);
}

fn gain_error(cx: &Context, w: &mut Vec<Warning>) {
    let (a, tol) = (cx.a, cx.s.stage.tolerance);
    if a.gain_error.abs() <= tol || a.unstable() {
        return;
    }
    let text = format!(
        "DC gain {:.4} is {:.2} % off the network's {:.4}, more than the {:.2} % resistor tolerance; \
         more loop gain (lower noise gain or a higher-gain amplifier) reduces it",
        a.dc_gain,
        a.gain_error * 100.0,
        a.ideal_gain,
        tol * 100.0
    );
    push(w, Code::GainError, Severity::Warning, text);
}

/// The resistance in series with the two inputs (or the reference) upsets
/// the resistor match: the CMRR moves by more than [`CMRR_MOVE_DB`] from
/// what the parts alone give.
fn reference_imbalance(cx: &Context, w: &mut Vec<Warning>) {
    let (Some(with), Some(parts)) = (cx.a.cmrr_dc_db, cx.a.cmrr_parts_dc_db) else {
        return;
    };
    let moved = if with.is_finite() && parts.is_finite() {
        (with - parts).abs() > CMRR_MOVE_DB
    } else {
        with.is_finite() != parts.is_finite()
    };
    if !moved || cx.a.unstable() {
        return;
    }
    let db = |v: f64| match v.is_finite() {
        true => format!("{v:.1} dB"),
        false => "unbounded".into(),
    };
    let src = &cx.s.source;
    let r = src.r.unwrap_or(0.0);
    let r_plus = src.r_plus.unwrap_or(r);
    let reference = cx.s.reference.map_or(0.0, |x| x.r);
    // Name only what is there: the sources where either has resistance,
    // the reference where it has.
    let mut named = Vec::new();
    let mut fixes = Vec::new();
    if r > 0.0 || r_plus > 0.0 {
        named.push(format!(
            "the source resistances (r {}, r_plus {})",
            fmt_eng(r, "Ω"),
            fmt_eng(r_plus, "Ω")
        ));
        fixes.push("equal source resistances, r1 and r3 reduced by them, or buffered inputs");
    }
    if reference > 0.0 {
        named.push(format!("the reference's {}", fmt_eng(reference, "Ω")));
        fixes.push("a buffered reference or r4 reduced by the reference's resistance");
    }
    if named.is_empty() {
        return;
    }
    let verb = if r > 0.0 || r_plus > 0.0 {
        "take"
    } else {
        "takes"
    };
    let (named, fix) = (named.join(" and "), fixes.join(", and "));
    let text = format!(
        "{named} {verb} the CMRR from {} (the resistors alone) to {}; restore it with {fix}",
        db(parts),
        db(with)
    );
    push(w, Code::ReferenceImbalance, Severity::Warning, text);
}

/// The parts that pull the passive network's gain off the resistor ratio.
fn divider_parts(s: &Scenario) -> Vec<String> {
    let mut parts = Vec::new();
    let kind = s.stage.topology.kind();
    let source = present(s.source.r).filter(|_| kind.source_in_network);
    let [input_part, _] = ratio_names(s);
    if let Some(r) = source {
        parts.push(format!(
            "source r {} in series with {input_part}",
            fmt_eng(r, "Ω")
        ));
    }
    // A second input's source beside its own input part.
    let second = kind.pairs.and_then(|p| p.also).map(|a| a[0]);
    let r_plus = present(s.source.r_plus.or(s.source.r)).filter(|_| kind.source_in_network);
    if let (Some(part), Some(r)) = (second, r_plus) {
        let name = part.rsplit('.').next().unwrap_or(part);
        parts.push(format!(
            "source r_plus {} in series with {name}",
            fmt_eng(r, "Ω")
        ));
    }
    // With the feedback taken at the load, riso is inside the loop.
    let riso = present(s.stage.riso).filter(|_| s.stage.feedback == Feedback::Pin);
    if let (Some(riso), Some(rl)) = (riso, s.load.r) {
        parts.push(format!(
            "riso {} into the {} load",
            fmt_eng(riso, "Ω"),
            fmt_eng(rl, "Ω")
        ));
    }
    parts
}

/// The names of the kind's gain-setting pair (`rg`, `rf`; `r1`, `r2`).
fn ratio_names(s: &Scenario) -> [&'static str; 2] {
    s.stage
        .topology
        .kind()
        .pairs
        .map_or(["rg", "rf"], |p| p.names())
}

/// The source resistance, riso or the load move the gain off 1 + rf/rg
/// (or −rf/rg) by more than the tolerance. With `spec.gain_target` the
/// network gain is held against that aim instead, so a ratio chosen to
/// make up for the divider is not warned about.
fn load_divider(cx: &Context, w: &mut Vec<Warning>) {
    let (a, tol) = (cx.a, cx.s.stage.tolerance);
    let target = cx.s.spec.as_ref().and_then(|x| x.gain_target);
    let (aim, network) = (target.unwrap_or(a.nominal_gain), a.ideal_gain);
    if !(aim.is_finite() && network.is_finite()) || aim == 0.0 {
        return;
    }
    let parts = divider_parts(cx.s);
    let change = network / aim - 1.0;
    if change.abs() <= tol || parts.is_empty() {
        return;
    }
    let why = if parts.is_empty() {
        "the passive network".to_string()
    } else {
        parts.join(" and ")
    };
    let against = match target {
        Some(t) => format!("put the gain at {network:.4}, off the spec's target {t:.4}"),
        None => format!(
            "change the gain from the nominal {:.4} to {network:.4}",
            a.nominal_gain
        ),
    };
    // Taking the feedback after riso helps only where riso divides.
    let [g, f] = ratio_names(cx.s);
    let rescale = match cx.s.stage.topology.kind().pairs.and_then(|p| p.also) {
        Some(also) => {
            let [g2, f2] = also.map(|p| p.rsplit('.').next().unwrap_or(p));
            format!("rescale {f}/{g} and {f2}/{g2}")
        }
        None => format!("rescale {f}/{g}"),
    };
    let fix = if parts.iter().any(|p| p.starts_with("riso")) {
        format!("take the feedback after riso (feedback: Load) or {rescale}")
    } else {
        rescale
    };
    let text = format!(
        "{why} {against} ({:+.2} %), more than the {:.2} % tolerance; {fix} \
         (the r list and pairs --source-r --riso --load-r count them in)",
        change * 100.0,
        tol * 100.0
    );
    push(w, Code::LoadDivider, Severity::Warning, text);
}

fn resistor_noise(cx: &Context, w: &mut Vec<Warning>) {
    let a = cx.a;
    let resistors: Vec<_> = a
        .noise_sources
        .iter()
        .filter(|n| {
            matches!(
                n.kind,
                NoiseKind::StageResistor | NoiseKind::SourceResistance
            )
        })
        .collect();
    let share: f64 = resistors.iter().map(|n| n.share).sum();
    if share <= RESISTOR_NOISE_SHARE || a.noise_rms <= 0.0 {
        return;
    }
    let source: Vec<_> = resistors
        .iter()
        .filter(|n| n.kind == NoiseKind::SourceResistance)
        .collect();
    let source_share: f64 = source.iter().map(|n| n.share).sum();
    // The largest source the design can change: not the source resistance.
    let changeable = a
        .noise_sources
        .iter()
        .filter(|n| {
            !matches!(n.kind, NoiseKind::SourceResistance | NoiseKind::SourceShot) && n.share > 0.0
        })
        .max_by(|x, y| x.share.total_cmp(&y.share));
    let text = if source_share > SOURCE_NOISE_SHARE {
        let floor = source.iter().map(|n| n.rms * n.rms).sum::<f64>().sqrt();
        let then = changeable
            .map(|n| {
                format!(
                    "; of what the design can change, {} is the largest ({:.0} %)",
                    n.label,
                    n.share * 100.0
                )
            })
            .unwrap_or_default();
        format!(
            "the source resistance makes {:.0} % of the output noise power: the stage cannot \
             do better than {} rms over the band at this gain (the source's own noise){then}",
            source_share * 100.0,
            fmt_eng(floor, "V")
        )
    } else {
        let top = resistors
            .iter()
            .max_by(|x, y| x.share.total_cmp(&y.share))
            .map(|n| format!(" ({} alone {:.0} %)", n.label, n.share * 100.0))
            .unwrap_or_default();
        format!(
            "resistor thermal noise is {:.0} % of the output noise power{top}{}",
            share * 100.0,
            changeable.map(noise_advice).unwrap_or_default()
        )
    };
    push(w, Code::ResistorNoise, Severity::Info, text);
}

/// What to do about the largest noise source the design can change.
fn noise_advice(n: &crate::engine::analysis::NoiseShare) -> String {
    let pct = n.share * 100.0;
    match n.kind {
        NoiseKind::StageResistor => {
            format!(
                "; lower resistor values reduce it, {} first ({pct:.0} %)",
                n.label
            )
        }
        NoiseKind::AmpVoltage => format!(
            "; the largest part the design can change is the {} ({pct:.0} %): \
             an amplifier with lower voltage noise reduces it",
            n.label
        ),
        NoiseKind::AmpCurrent => format!(
            "; the largest part the design can change is the {} ({pct:.0} %): \
             an amplifier with lower current noise, or lower resistance at its inputs, reduces it",
            n.label
        ),
        NoiseKind::SourceResistance | NoiseKind::SourceShot => String::new(),
    }
}

/// What the amplifier output drives at DC: the feedback network and the
/// load, as the output actually drives them (with the feedback taken at
/// the load, riso feeds both).
fn heavy_output_load(cx: &Context, w: &mut Vec<Warning>) {
    let (s, st) = (cx.s, &cx.s.stage);
    let feedback = (st.topology.kind().feedback_load)(st);
    let riso = st.riso.unwrap_or(0.0);
    let at_load = st.feedback == Feedback::Load;
    let load = s
        .load
        .r
        .map_or(f64::INFINITY, |r| if at_load { r } else { r + riso });
    let seen = if at_load {
        riso + parallel(&[feedback, load])
    } else {
        parallel(&[feedback, load])
    };
    if seen >= HEAVY_LOAD_OHM {
        return;
    }
    let network = if at_load {
        format!(
            "riso {} into feedback {} ∥ load {}",
            fmt_eng(riso, "Ω"),
            fmt_eng(feedback, "Ω"),
            fmt_eng(load, "Ω")
        )
    } else {
        format!(
            "feedback {} ∥ load {}",
            fmt_eng(feedback, "Ω"),
            fmt_eng(load, "Ω")
        )
    };
    let text = format!(
        "the amplifier output drives {} at DC ({network}), {} per volt of \
         output; below about {} the output current and heating grow: raise the resistor \
         values",
        fmt_eng(seen, "Ω"),
        fmt_eng(1.0 / seen, "A"),
        fmt_eng(HEAVY_LOAD_OHM, "Ω")
    );
    push(w, Code::HeavyOutputLoad, Severity::Warning, text);
}

/// The stage's real resistors that apply: (label, ohms).
fn stage_resistors(s: &Scenario) -> Vec<(&'static str, f64)> {
    PARAMS
        .iter()
        .filter(|p| p.is_resistor() && p.applies(s))
        .filter_map(|p| p.get(s).map(|v| (p.label, v)))
        .collect()
}

fn off_series(cx: &Context, w: &mut Vec<Warning>) {
    let series = cx.s.stage.series;
    for (name, r) in stage_resistors(cx.s) {
        if r.is_finite() && r > 0.0 && !series.contains(r) {
            let text = format!(
                "{name} = {} is not an {series} value (nearest {})",
                fmt_eng(r, "Ω"),
                fmt_eng(series.nearest(r), "Ω")
            );
            push(w, Code::OffSeries, Severity::Info, text);
        }
    }
}

fn value_range(cx: &Context, w: &mut Vec<Warning>) {
    let s = cx.s;
    let mut note = |text: String| push(w, Code::ValueRange, Severity::Info, text);
    for (name, r) in stage_resistors(s) {
        if r > 10.0e6 {
            note(format!(
                "{name} = {} is very high: leakage, board capacitance and its own noise matter",
                fmt_eng(r, "Ω")
            ));
        }
    }
    let rf = s.stage.rf.unwrap_or(0.0);
    if let Some(rin) = s.amp.rin.filter(|rin| rf > 0.0 && rf > 0.1 * rin) {
        note(format!(
            "rf = {} is not small against the amplifier input resistance {}",
            fmt_eng(rf, "Ω"),
            fmt_eng(rin, "Ω")
        ));
    }
    if s.amp.gbw > s.amp.a0 * 1.0e9 {
        note(format!(
            "the dominant pole gbw/a0 = {} is unusually high for a voltage-feedback op-amp",
            fmt_eng(s.amp.gbw / s.amp.a0, "Hz")
        ));
    }
    for p in PARAMS
        .iter()
        .filter(|p| p.applies(s) && p.near_range_end(s))
    {
        note(format!(
            "{} = {} is near the end of the accepted range ({}): check the value",
            p.label,
            p.display(s),
            p.range_text()
        ));
    }
}
