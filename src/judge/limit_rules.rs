//! The design rules on DC errors and signal limits (listed in
//! [`crate::judge::warnings::RULES`]): swing, input range, slew, output current
//! and offset. Each reads the figures of [`crate::engine::limits`].

use crate::engine::limits::{DcOnly, Drawn};
use crate::judge::warning::{
    push, Code, Context, Severity, Warning, HEADROOM_WARN_SHARE, IOUT_WARN_SHARE,
    OFFSET_WARN_SHARE, SLEW_WARN_SHARE,
};
use crate::model::scenario::{present, Supply};
use crate::model::stages::Node;
use crate::model::values::fmt_eng;

/// The internal output leaves the usable range between the rails.
pub fn output_swing(cx: &Context, w: &mut Vec<Warning>) {
    let l = &cx.a.limits;
    if cx.a.unstable() {
        return;
    }
    if let (Some(d), Some(sup)) = (l.dc_only, cx.s.supply) {
        dc_swing(cx, &d, sup, w);
        return;
    }
    let (Some(low), Some(high), Some(sup)) = (l.headroom_low_v, l.headroom_high_v, cx.s.supply)
    else {
        return;
    };
    let span = sup.pos - sup.neg;
    let (room, rail, toward) = if low <= high {
        (low, "negative", "below")
    } else {
        (high, "positive", "above")
    };
    let drop = cx.s.amp.ro * l.iout_peak_a.unwrap_or(0.0);
    let text = if room < 0.0 {
        format!(
            "the output clips on the {rail} rail: the amplifier's internal output must go {} \
             {toward} its usable range (up to {} of that is the drop across ro at the peak \
             current); move the DC level, lower the gain or the signal, or widen the supply",
            fmt_eng(-room, "V"),
            fmt_eng(drop, "V")
        )
    } else if room < HEADROOM_WARN_SHARE * span {
        format!(
            "only {} of headroom to the {rail} rail ({:.1} % of the {} supply span)",
            fmt_eng(room, "V"),
            100.0 * room / span,
            fmt_eng(span, "V")
        )
    } else {
        return;
    };
    let sev = if room < 0.0 {
        Severity::Severe
    } else {
        Severity::Warning
    };
    push(w, Code::OutputSwing, sev, text);
}

/// Without a signal: the operating point alone already past a rail.
fn dc_swing(cx: &Context, d: &DcOnly, sup: Supply, w: &mut Vec<Warning>) {
    let (Some(low), Some(high)) = (d.headroom_low_v, d.headroom_high_v) else {
        return;
    };
    let (room, rail, toward) = if low <= high {
        (low, "−", "below")
    } else {
        (high, "+", "above")
    };
    if room >= 0.0 {
        return;
    }
    let usable = cx.s.amp.usable_rails(&sup);
    let text = format!(
        "held at the {rail} rail at the DC operating point: the amplifier's internal output          would have to sit {} {toward} its usable range ({} to {}) with no signal at all;          move the DC level, lower the gain or widen the supply",
        fmt_eng(-room, "V"),
        fmt_eng(usable.0, "V"),
        fmt_eng(usable.1, "V"),
    );
    push(w, Code::OutputSwing, Severity::Severe, text);
}

/// The + input leaves the amplifier's common-mode range.
pub fn input_range(cx: &Context, w: &mut Vec<Warning>) {
    let l = &cx.a.limits;
    let (room, lo, hi) = match l.dc_only {
        Some(d) => (d.cm_headroom_v, d.cm_low_v, d.cm_high_v),
        None => (l.cm_headroom_v, l.cm_low_v, l.cm_high_v),
    };
    let (Some(room), Some(lo), Some(hi)) = (room, lo, hi) else {
        return;
    };
    if room >= 0.0 || cx.a.unstable() {
        return;
    }
    let tied = cx.s.stage.topology.kind().reference == Some(Node::Plus);
    let grounded = match (tied, cx.s.reference) {
        (true, None) => "the + input is grounded, and ground ",
        (true, Some(_)) => "the + input sits on the reference input, and its level ",
        (false, _) => "the + input ",
    };
    let text = format!(
        "{grounded}lies outside the input common-mode range by {} (the + input spans {} to {}); \
         an amplifier whose inputs reach that rail, or a DC level inside the range, fixes it",
        fmt_eng(-room, "V"),
        fmt_eng(lo, "V"),
        fmt_eng(hi, "V")
    );
    push(w, Code::InputRange, Severity::Severe, text);
}

/// The band asks more slew rate of the internal output than it has.
pub fn slew(cx: &Context, w: &mut Vec<Warning>) {
    let l = &cx.a.limits;
    let (Some(sr), Some(need)) = (present(cx.s.amp.slew), l.slew_needed_v_per_s) else {
        return;
    };
    if need <= SLEW_WARN_SHARE * sr || cx.a.unstable() {
        return;
    }
    let sev = if need > sr {
        Severity::Severe
    } else {
        Severity::Warning
    };
    let fpbw = l
        .fpbw_hz
        .map(|f| format!("; full-power bandwidth {}", fmt_eng(f, "Hz")))
        .unwrap_or_default();
    let text = format!(
        "the signal needs {} at {} ({:.0} % of the {} slew rate){fpbw}: a smaller signal, \
         a narrower band or a faster amplifier",
        fmt_eng(need, "V/s"),
        fmt_eng(l.slew_at_hz, "Hz"),
        100.0 * need / sr,
        fmt_eng(sr, "V/s")
    );
    push(w, Code::Slew, sev, text);
}

/// The amplifier's output current nears or passes its limit.
pub fn output_current(cx: &Context, w: &mut Vec<Warning>) {
    let l = &cx.a.limits;
    let (Some(limit), Some(peak)) = (present(cx.s.amp.iout), l.iout_peak_a) else {
        return;
    };
    if peak <= IOUT_WARN_SHARE * limit || cx.a.unstable() {
        return;
    }
    let sev = if peak > limit {
        Severity::Severe
    } else {
        Severity::Warning
    };
    let by = match l.iout_drawn {
        Some(Drawn::LoadCapacitance) => "mostly into the load capacitance",
        Some(Drawn::LoadResistance) => "mostly into the load resistance",
        _ => "mostly into the feedback network",
    };
    let text = format!(
        "the output current reaches {} at {}, {by} ({:.0} % of the {} limit)",
        fmt_eng(peak, "A"),
        fmt_eng(l.iout_at_hz, "Hz"),
        100.0 * peak / limit,
        fmt_eng(limit, "A")
    );
    push(w, Code::OutputCurrent, sev, text);
}

/// The worst-case DC offset is large against the output signal.
pub fn dc_offset(cx: &Context, w: &mut Vec<Warning>) {
    let l = &cx.a.limits;
    let (Some(offset), Some(peak)) = (l.out_offset_max_v, cx.s.signal_peak()) else {
        return;
    };
    let signal = peak * cx.a.dc_gain.abs();
    if offset <= OFFSET_WARN_SHARE * signal || cx.a.unstable() {
        return;
    }
    // Advice names only what the stage can hold: a resistor to balance the
    // bias currents at the + input has no place in it, so its value is
    // given as a figure, not as the fix.
    let fix = match l.bias_balance_ohm {
        Some(r) if l.offset_from_bias_v > offset - l.offset_from_bias_v => format!(
            "; the bias currents dominate: lower rf and rg, or an amplifier with a lower ib, \
             reduce it ({} in series with the + input would balance them, a part this stage \
             cannot hold)",
            fmt_eng(r, "Ω")
        ),
        _ => String::new(),
    };
    // A zero peak has no share to give (offset/0 is infinite): the offset
    // is then the whole output.
    let text = if signal > 0.0 {
        format!(
            "worst-case output offset {} is {:.1} % of the {} output peak{fix}",
            fmt_eng(offset, "V"),
            100.0 * offset / signal,
            fmt_eng(signal, "V")
        )
    } else {
        format!(
            "worst-case output offset {} with no output signal ({} is 0){fix}",
            fmt_eng(offset, "V"),
            cx.s.peak_field()
        )
    };
    push(w, Code::DcOffset, Severity::Warning, text);
}
