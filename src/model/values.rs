//! Engineering values: parsing SI-prefixed and IEC 60062 RKM text, and
//! printing numbers in engineering notation.

use std::fmt;

/// A piece of text that is not a value.
#[derive(Debug, Clone, PartialEq)]
pub struct ValueError {
    pub text: String,
    pub reason: String,
}

impl fmt::Display for ValueError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.text.trim().is_empty() {
            write!(f, "empty value: {}", self.reason)
        } else {
            write!(f, "`{}` is not a value: {}", self.text, self.reason)
        }
    }
}

impl std::error::Error for ValueError {}

fn err(text: &str, reason: impl Into<String>) -> ValueError {
    ValueError {
        text: text.to_string(),
        reason: reason.into(),
    }
}

/// Multiplier letters: SI prefixes plus the RKM `R` (×1).
fn multiplier(c: char) -> Option<f64> {
    Some(match c {
        'f' => 1e-15,
        'p' => 1e-12,
        'n' => 1e-9,
        'u' | 'µ' | 'μ' => 1e-6,
        'm' => 1e-3,
        'R' | 'r' => 1.0,
        'k' | 'K' => 1e3,
        'M' => 1e6,
        'G' => 1e9,
        'T' => 1e12,
        _ => return None,
    })
}

/// Unit words accepted after a value (`4.7kΩ`, `100nF`, `1 kHz`).
const UNITS: &[&str] = &["Ω", "ohms", "ohm", "Ohm", "F", "Hz", "V", "A", "s"];

/// The parts of a value's text, split before they are checked.
#[derive(Default)]
struct Pieces {
    sign: f64,
    mantissa: String,
    point: bool,
    exponent: String,
    mult: Option<f64>,
    fraction: String,
    rest: String,
}

/// Digits with at most one decimal point, from `i`; returns the end.
fn read_mantissa(
    text: &str,
    chars: &[char],
    mut i: usize,
    p: &mut Pieces,
) -> Result<usize, ValueError> {
    let start = i;
    while i < chars.len() && (chars[i].is_ascii_digit() || chars[i] == '.') {
        if chars[i] == '.' {
            if p.point {
                return Err(err(text, "more than one decimal point"));
            }
            p.point = true;
        }
        i += 1;
    }
    p.mantissa = chars[start..i].iter().collect();
    Ok(i)
}

/// An exponent (`1e3`, `2.5E-6`) at `i`, if there is one; returns the end.
fn read_exponent(
    text: &str,
    chars: &[char],
    i: usize,
    p: &mut Pieces,
) -> Result<usize, ValueError> {
    if i >= chars.len() || !(chars[i] == 'e' || chars[i] == 'E') || p.mantissa.is_empty() {
        return Ok(i);
    }
    let mut j = i + 1;
    if j < chars.len() && (chars[j] == '-' || chars[j] == '+') {
        j += 1;
    }
    let digits_start = j;
    while j < chars.len() && chars[j].is_ascii_digit() {
        j += 1;
    }
    if j == digits_start {
        return Err(err(text, "exponent has no digits"));
    }
    p.exponent = chars[i + 1..j].iter().collect();
    Ok(j)
}

/// A multiplier letter and its RKM fraction digits at `i` (not when the
/// letter starts a whole unit word such as `s`); returns the end.
fn read_multiplier(chars: &[char], mut i: usize, p: &mut Pieces) -> usize {
    if i >= chars.len() {
        return i;
    }
    let rest: String = chars[i..].iter().collect();
    // `meg` is mega, as some tools write it where `M` and `m` might be confused.
    let (m, len) = if rest.starts_with("meg") {
        (Some(1e6), 3)
    } else {
        (multiplier(chars[i]), 1)
    };
    let Some(m) = m.filter(|_| !UNITS.contains(&rest.as_str())) else {
        return i;
    };
    p.mult = Some(m);
    i += len;
    let fs = i;
    while i < chars.len() && chars[i].is_ascii_digit() {
        i += 1;
    }
    p.fraction = chars[fs..i].iter().collect();
    i
}

/// Split text into its pieces, or say what is wrong with it.
fn split_value(text: &str) -> Result<Pieces, ValueError> {
    let t = text.trim();
    if t.is_empty() {
        return Err(err(text, "expected a number such as 4.7k, 4k7 or 100n"));
    }
    let chars: Vec<char> = t.chars().collect();
    let mut p = Pieces {
        sign: 1.0,
        ..Pieces::default()
    };
    let mut i = 0;
    if chars[0] == '-' || chars[0] == '+' {
        if chars[0] == '-' {
            p.sign = -1.0;
        }
        i = 1;
    }
    i = read_mantissa(text, &chars, i, &mut p)?;
    i = read_exponent(text, &chars, i, &mut p)?;
    // Spaces may separate the number from its prefix or unit (`1 kHz`).
    while i < chars.len() && chars[i] == ' ' {
        i += 1;
    }
    i = read_multiplier(&chars, i, &mut p);
    p.rest = chars[i..]
        .iter()
        .collect::<String>()
        .trim_start()
        .to_string();
    Ok(p)
}

/// Parse a number written with an optional SI prefix (f p n u/µ m k M G T,
/// `meg` for mega: `4.7k`, `100n`, `2.2u`, `1e3`) or in the IEC 60062 RKM
/// code (`4k7`, `4K7`, `2R2`, `1M0`, `470R`, `6n8`, `R47`). A trailing unit
/// (`Ω`, `F`, `Hz`, ...) is allowed.
pub fn parse_value(text: &str) -> Result<f64, ValueError> {
    parse_quantity(text).map(|(v, _)| v)
}

/// Like [`parse_value`], also returning the unit written after the number
/// (empty when none).
pub fn parse_quantity(text: &str) -> Result<(f64, String), ValueError> {
    let p = split_value(text)?;
    if !p.fraction.is_empty() && (p.point || !p.exponent.is_empty()) {
        return Err(err(
            text,
            "RKM code (like 4k7) cannot also have a decimal point or exponent",
        ));
    }
    if (p.mantissa.is_empty() && p.fraction.is_empty()) || p.mantissa == "." {
        return Err(err(text, "no digits"));
    }
    if !p.rest.is_empty() && !UNITS.contains(&p.rest.as_str()) {
        return Err(err(
            text,
            format!("unexpected `{}` after the number", p.rest),
        ));
    }
    if p.mult.is_none() && !p.fraction.is_empty() {
        return Err(err(text, "misplaced digits"));
    }
    let mut number = String::new();
    number.push_str(if p.mantissa.is_empty() {
        "0"
    } else {
        &p.mantissa
    });
    if !p.fraction.is_empty() {
        number.push('.');
        number.push_str(&p.fraction);
    }
    if !p.exponent.is_empty() {
        number.push('e');
        number.push_str(&p.exponent);
    }
    // A power-of-ten multiplier joins the exponent, so `4.7n` reads as the
    // double nearest 4.7e-9 (not 4.7 × 1e-9, one rounding more).
    let mult = p.mult.unwrap_or(1.0);
    let decade = mult.log10().round();
    let v: f64 = if 10f64.powi(decade as i32) == mult {
        let (digits, exp) = number.split_once('e').unwrap_or((&number, "0"));
        let exp: i64 = exp.parse().map_err(|_| err(text, "not a number"))?;
        format!("{digits}e{}", exp + decade as i64)
            .parse()
            .map_err(|_| err(text, "not a number"))?
    } else {
        let v: f64 = number.parse().map_err(|_| err(text, "not a number"))?;
        v * mult
    };
    let v = p.sign * v;
    if !v.is_finite() {
        return Err(err(text, "out of range"));
    }
    Ok((v, p.rest))
}

/// Parse a resistance, capacitance or other strictly positive quantity.
pub fn parse_positive(text: &str) -> Result<f64, ValueError> {
    let v = parse_value(text)?;
    if v <= 0.0 {
        return Err(err(text, "must be greater than zero"));
    }
    Ok(v)
}

/// Parse a quantity that may be zero (meaning "absent") but not negative.
pub fn parse_non_negative(text: &str) -> Result<f64, ValueError> {
    let v = parse_value(text)?;
    if v < 0.0 {
        return Err(err(text, "must not be negative"));
    }
    Ok(v)
}

const PREFIXES: [(i32, &str); 10] = [
    (-15, "f"),
    (-12, "p"),
    (-9, "n"),
    (-6, "µ"),
    (-3, "m"),
    (0, ""),
    (3, "k"),
    (6, "M"),
    (9, "G"),
    (12, "T"),
];

/// Split a value into (mantissa, prefix) with 1 ≤ |mantissa| < 1000,
/// rounded to `sig` significant digits.
fn split_eng(v: f64, sig: usize) -> (f64, &'static str) {
    split_eng_from(v, sig, -15)
}

/// The smallest prefix a unit is written with, where the trade reads it so
/// (board designers read capacitors in pF: 0.82 pF, not 820 fF).
const LOWEST_PREFIX: &[(&str, i32)] = &[("F", -12)];

fn lowest_exponent(unit: &str) -> i32 {
    LOWEST_PREFIX
        .iter()
        .find(|(u, _)| *u == unit)
        .map_or(-15, |(_, e)| *e)
}

/// As [`split_eng`], never with a prefix below 10^`lowest`.
fn split_eng_from(v: f64, sig: usize, lowest: i32) -> (f64, &'static str) {
    if v == 0.0 || !v.is_finite() {
        return (v, "");
    }
    let round = |m: f64| {
        let digits = m.abs().log10().floor() as i32 + 1;
        let scale = 10f64.powi(sig as i32 - digits);
        (m * scale).round() / scale
    };
    let mut exp3 = (((v.abs().log10() / 3.0).floor() as i32) * 3).clamp(lowest, 12);
    let mut m = round(v / 10f64.powi(exp3));
    // Rounding can carry 999.96 up to 1000: move to the next prefix.
    if m.abs() >= 1000.0 && exp3 < 12 {
        exp3 += 3;
        m = round(v / 10f64.powi(exp3));
    }
    let prefix = PREFIXES
        .iter()
        .find(|(e, _)| *e == exp3)
        .map(|(_, p)| *p)
        .unwrap_or("");
    (m, prefix)
}

fn trim_number(m: f64, sig: usize) -> String {
    let digits = if m == 0.0 {
        1
    } else {
        m.abs().log10().floor() as i32 + 1
    };
    let decimals = (sig as i32 - digits).max(0) as usize;
    let s = format!("{m:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// Whether a value lies outside what the prefixes f … T can write with a
/// mantissa below 1000.
fn beyond_prefixes(v: f64) -> bool {
    v != 0.0 && v.is_finite() && (v.abs() >= 999.95e12 || v.abs() < 1e-15)
}

/// Exponent notation with `sig` significant digits, trailing zeros
/// dropped: `1e99`, `2.5e-18` (reads back with [`parse_value`]).
fn exponent_text(v: f64, sig: usize) -> String {
    let s = format!("{v:.prec$e}", prec = sig.saturating_sub(1));
    match s.split_once('e') {
        Some((m, e)) if m.contains('.') => {
            format!("{}e{e}", m.trim_end_matches('0').trim_end_matches('.'))
        }
        _ => s,
    }
}

/// `v` written in the notation of `written`, a value as a designer typed it
/// in a file: IEC 60062 RKM code when it was (`"19k1"` → `20k`, `4R7`), SI
/// prefixes otherwise (`"4.7n"` → `5.6n`), keeping its unit and its spelling
/// of micro. The fewest digits that read back to exactly `v`.
pub fn fmt_like(written: &str, v: f64) -> String {
    let (_, unit) = parse_quantity(written).unwrap_or((0.0, String::new()));
    let core = written.trim().trim_end_matches(unit.as_str()).trim_end();
    let chars: Vec<char> = core.chars().collect();
    let rkm = chars
        .windows(2)
        .any(|w| w[0].is_ascii_alphabetic() && w[1].is_ascii_digit())
        || core.ends_with(['R', 'r']);
    let micro = if written.contains('u') { "u" } else { "µ" };
    for sig in 1..=17 {
        let (m, prefix) = split_eng(v, sig);
        if beyond_prefixes(v) {
            break;
        }
        let prefix = if prefix == "µ" { micro } else { prefix };
        let digits = trim_number(m, sig);
        let text = if rkm {
            let letter = if prefix.is_empty() { "R" } else { prefix };
            match digits.split_once('.') {
                Some((i, f)) => format!("{i}{letter}{f}"),
                None => format!("{digits}{letter}"),
            }
        } else {
            format!("{digits}{prefix}{unit}")
        };
        if parse_value(&text).ok() == Some(v) {
            return text;
        }
    }
    format!("{v:?}")
}

// Values spelled in plain ASCII on this thread (the workbench's
// `--ascii` frames): set by `with_ascii_units`.
std::thread_local! {
    static ASCII_UNITS: std::cell::Cell<bool> = const { std::cell::Cell::new(false) };
}

/// Run `f` with values spelled in plain ASCII (`on`) or not, on this
/// thread: Ω as `Ohm`, µ as `u`, ° as `deg`, √Hz as `rtHz`. Layout then
/// measures the ASCII text itself.
pub fn with_ascii_units<R>(on: bool, f: impl FnOnce() -> R) -> R {
    let old = ASCII_UNITS.with(|a| a.replace(on));
    let r = f();
    ASCII_UNITS.with(|a| a.set(old));
    r
}

/// Whether values are spelled in plain ASCII on this thread.
pub fn ascii_units() -> bool {
    ASCII_UNITS.with(std::cell::Cell::get)
}

/// A unit text in the current spelling: itself, or its ASCII spelling
/// (`Ohm`, `u`, `deg`, `rtHz`) under [`with_ascii_units`].
pub fn spelled(text: &str) -> String {
    if !ascii_units() {
        return text.to_string();
    }
    text.replace('Ω', "Ohm")
        .replace(['µ', 'μ'], "u")
        .replace('°', "deg")
        .replace('√', "rt")
}

/// Engineering notation with a unit, e.g. `4.7 kΩ`, `100 nF`, `1.59 MHz`.
/// Three significant digits, trailing zeros dropped.
pub fn fmt_eng(v: f64, unit: &str) -> String {
    fmt_eng_sig(v, unit, 3)
}

/// Engineering notation with a chosen number of significant digits.
pub fn fmt_eng_sig(v: f64, unit: &str, sig: usize) -> String {
    if v.is_nan() {
        return "n/a".to_string();
    }
    if v.is_infinite() {
        return if v > 0.0 {
            "open".into()
        } else {
            "-inf".into()
        };
    }
    if beyond_prefixes(v) {
        return format!("{} {unit}", exponent_text(v, sig))
            .trim_end()
            .to_string();
    }
    let (m, p) = split_eng_from(v, sig, lowest_exponent(unit));
    let num = no_negative_zero(trim_number(m, sig));
    if unit.is_empty() && p.is_empty() {
        num
    } else {
        spelled(&format!("{num} {p}{unit}"))
    }
}

/// "-0", "-0.00" → "0", "0.00"; other text unchanged.
fn no_negative_zero(text: String) -> String {
    match text.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_string(),
        _ => text,
    }
}

/// A fixed-point number with `decimals` decimals and no negative zero.
pub fn fmt_fixed(v: f64, decimals: usize) -> String {
    no_negative_zero(format!("{v:.decimals$}"))
}

/// A plain number (a ratio, a percentage) with `sig` significant digits
/// and no SI prefix: `0.37`, `8958`, `100000`; exponent notation below
/// 1e-4 and from 1e10 (`2.5e-6`). Trailing zeros dropped, no negative zero.
pub fn fmt_plain(v: f64, sig: usize) -> String {
    if !v.is_finite() {
        return fmt_eng_sig(v, "", sig);
    }
    if v != 0.0 && (v.abs() < 1e-4 || v.abs() >= 1e10) {
        return exponent_text(v, sig);
    }
    let digits = if v == 0.0 {
        1
    } else {
        v.abs().log10().floor() as i32 + 1
    };
    let scale = 10f64.powi(sig as i32 - digits);
    let r = (v * scale).round() / scale;
    no_negative_zero(trim_number(r, sig.max(digits.max(1) as usize)))
}

/// Compact text that [`parse_value`] reads back: `4.7k`, `100n`, `1M`, using
/// `u` for micro so it can be typed. Up to four significant digits.
pub fn fmt_compact(v: f64) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    if beyond_prefixes(v) {
        return exponent_text(v, 4);
    }
    let (m, p) = split_eng(v, 4);
    let p = if p == "µ" { "u" } else { p };
    format!("{}{}", trim_number(m, 4), p)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn prints_engineering() {
        assert_eq!(fmt_eng(4700.0, "Ω"), "4.7 kΩ");
        assert_eq!(fmt_eng(1.0e-10, "F"), "100 pF");
        assert_eq!(fmt_eng(999.96, "Hz"), "1 kHz");
        assert_eq!(fmt_eng(0.5, ""), "500 m");
        assert_eq!(fmt_eng(12.0, ""), "12");
        assert_eq!(fmt_compact(2.2e-6), "2.2u");
    }

    #[test]
    fn beyond_the_prefixes_in_exponent_notation() {
        assert_eq!(fmt_eng(1e99, "Ω"), "1e99 Ω");
        assert_eq!(fmt_eng(2.5e-18, "F"), "2.5e-18 F");
        assert_eq!(fmt_compact(1e300), "1e300");
        assert_eq!(parse_value(&fmt_compact(1e300)).unwrap(), 1e300);
        assert_eq!(fmt_eng(10e12, "Ω"), "10 TΩ");
        assert_eq!(parse_value("1meg").unwrap(), 1e6);
    }

    #[test]
    fn plain_ratios_percentages_and_picofarads() {
        // Ratios carry no SI prefix (a prefix reads like a unit).
        assert_eq!(fmt_plain(0.37, 4), "0.37");
        assert_eq!(fmt_plain(8958.28, 4), "8958");
        assert_eq!(fmt_plain(100_000.0, 3), "100000");
        assert_eq!(fmt_plain(-0.00001, 3), "-1e-5");
        assert_eq!(fmt_plain(-0.0, 3), "0");
        assert_eq!(fmt_plain(0.5, 3), "0.5");
        assert_eq!(fmt_fixed(-0.04, 1), "0.0");
        assert_eq!(fmt_fixed(-0.06, 1), "-0.1");
        // Capacitors from pF up: 820 fF reads 0.82 pF.
        assert_eq!(fmt_eng(820e-15, "F"), "0.82 pF");
        assert_eq!(fmt_eng(1e-15, "F"), "0.001 pF");
        assert_eq!(fmt_eng(4.7e-9, "F"), "4.7 nF");
        assert_eq!(fmt_eng(820e-15, "A"), "820 fA");
    }

    #[test]
    fn compact_round_trips() {
        for v in [1.0, 4700.0, 1.0e-12, 3.3e-9, 0.047, 1.5e6, 12.34e3] {
            let back = parse_value(&fmt_compact(v)).unwrap();
            assert!((back - v).abs() <= 1e-9 * v, "{v} -> {}", fmt_compact(v));
        }
    }
}

/// Text safe to print on a terminal: C0 and C1 control characters and DEL
/// (ISO/IEC 6429) are shown as `\u{..}` escapes, so a title cannot move
/// the cursor, clear the screen or ring the bell.
pub fn printable(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        if c.is_control() || is_bidi_control(c) {
            out.push_str(&c.escape_unicode().to_string());
        } else {
            out.push(c);
        }
    }
    out
}

/// The bidirectional formatting characters of Unicode Standard Annex #9
/// (ALM, LRM, RLM, the embeddings, overrides and isolates): invisible,
/// they reorder the rest of a terminal line.
fn is_bidi_control(c: char) -> bool {
    matches!(c, '\u{061C}' | '\u{200E}' | '\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}')
}

#[cfg(test)]
mod printable_tests {
    use crate::model::values::printable;

    #[test]
    fn controls_are_escaped() {
        // ESC (U+001B), BEL (U+0007), DEL (U+007F) and CSI (U+009B) are
        // controls in ISO/IEC 6429; µ and Ω are not.
        assert_eq!(
            printable("a\u{1b}[2Jb\u{7}\u{7f}\u{9b}µΩ"),
            "a\\u{1b}[2Jb\\u{7}\\u{7f}\\u{9b}µΩ"
        );
    }

    #[test]
    fn bidi_marks_are_escaped() {
        // U+200F RIGHT-TO-LEFT MARK and U+202E RIGHT-TO-LEFT OVERRIDE are
        // bidirectional formatting characters (Unicode Standard Annex #9).
        assert_eq!(printable("a\u{200f}b\u{202e}c"), "a\\u{200f}b\\u{202e}c");
    }
}

/// A linear scale with "nice" steps (1, 2, 5 × 10^k) covering the data.
pub fn nice_linear(min: f64, max: f64, target_ticks: usize) -> ((f64, f64), Vec<f64>) {
    let (mut lo, mut hi) = (min, max);
    if !lo.is_finite() || !hi.is_finite() {
        return ((0.0, 1.0), vec![0.0, 1.0]);
    }
    if hi - lo < 1e-9 {
        lo -= 1.0;
        hi += 1.0;
    }
    let raw = (hi - lo) / target_ticks.max(1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    let lo = (lo / step).floor() * step;
    let hi = (hi / step).ceil() * step;
    let mut ticks = Vec::new();
    let mut t = lo;
    while t <= hi + step * 1e-6 {
        ticks.push(if t.abs() < step * 1e-9 { 0.0 } else { t });
        t += step;
    }
    ((lo, hi), ticks)
}

#[cfg(test)]
mod written_form {
    use super::fmt_like;

    /// IEC 60062 RKM code puts the multiplier letter at the decimal point
    /// (R for units); SI prefixes follow the number.
    #[test]
    fn notation_follows_the_written_value() {
        assert_eq!(fmt_like("19k1", 20_000.0), "20k");
        assert_eq!(fmt_like("4k7", 5_600.0), "5k6");
        assert_eq!(fmt_like("2R2", 4.7), "4R7");
        assert_eq!(fmt_like("470R", 560.0), "560R");
        assert_eq!(fmt_like("6n8", 8.2e-9), "8n2");
        assert_eq!(fmt_like("4.7n", 5.6e-9), "5.6n");
        assert_eq!(fmt_like("10MHz", 12.0e6), "12MHz");
        assert_eq!(fmt_like("2.2u", 3.3e-6), "3.3u");
        assert_eq!(fmt_like("2.2µ", 3.3e-6), "3.3µ");
    }
}
