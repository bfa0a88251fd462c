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

/// Parse a number written with an optional SI prefix (f p n u/µ m k M G T:
/// `4.7k`, `100n`,
/// `2.2u`, `1e3`) or in the IEC 60062 RKM code (`4k7`, `2R2`, `1M0`, `470R`,
/// `6n8`, `R47`). A trailing unit (`Ω`, `F`, `Hz`, ...) is allowed.
pub fn parse_value(text: &str) -> Result<f64, ValueError> {
    let t = text.trim();
    if t.is_empty() {
        return Err(err(text, "expected a number such as 4.7k, 4k7 or 100n"));
    }
    let chars: Vec<char> = t.chars().collect();
    let mut i = 0;
    let mut sign = 1.0;
    if chars[0] == '-' || chars[0] == '+' {
        if chars[0] == '-' {
            sign = -1.0;
        }
        i = 1;
    }
    // Mantissa: digits with at most one decimal point.
    let start = i;
    let mut seen_point = false;
    while i < chars.len() && (chars[i].is_ascii_digit() || chars[i] == '.') {
        if chars[i] == '.' {
            if seen_point {
                return Err(err(text, "more than one decimal point"));
            }
            seen_point = true;
        }
        i += 1;
    }
    let mantissa: String = chars[start..i].iter().collect();
    // Exponent (`1e3`, `2.5E-6`).
    let mut exponent = String::new();
    if i < chars.len() && (chars[i] == 'e' || chars[i] == 'E') && !mantissa.is_empty() {
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
        exponent = chars[i + 1..j].iter().collect();
        i = j;
    }
    // Spaces may separate the number from its prefix or unit (`1 kHz`).
    while i < chars.len() && chars[i] == ' ' {
        i += 1;
    }
    // Multiplier letter, then RKM fraction digits.
    let mut mult = 1.0;
    let mut fraction = String::new();
    let mut has_mult = false;
    if i < chars.len() {
        if let Some(m) = multiplier(chars[i]) {
            let rest: String = chars[i..].iter().collect();
            // "mF"-less words like "ohm" start with 'o', so no clash; but a bare
            // unit such as "s" must not be a multiplier. Only take the letter as
            // a multiplier when it is not the start of a whole unit word.
            if !UNITS.contains(&rest.as_str()) {
                mult = m;
                has_mult = true;
                i += 1;
                let fs = i;
                while i < chars.len() && chars[i].is_ascii_digit() {
                    i += 1;
                }
                fraction = chars[fs..i].iter().collect();
            }
        }
    }
    if !fraction.is_empty() && (seen_point || !exponent.is_empty()) {
        return Err(err(
            text,
            "RKM code (like 4k7) cannot also have a decimal point or exponent",
        ));
    }
    if mantissa.is_empty() && fraction.is_empty() {
        return Err(err(text, "no digits"));
    }
    if mantissa == "." {
        return Err(err(text, "no digits"));
    }
    let rest: String = chars[i..].iter().collect();
    let rest = rest.trim_start();
    if !rest.is_empty() && !UNITS.contains(&rest) {
        return Err(err(text, format!("unexpected `{rest}` after the number")));
    }
    if !has_mult && !fraction.is_empty() {
        return Err(err(text, "misplaced digits"));
    }
    let mut number = String::new();
    number.push_str(if mantissa.is_empty() { "0" } else { &mantissa });
    if !fraction.is_empty() {
        number.push('.');
        number.push_str(&fraction);
    }
    if !exponent.is_empty() {
        number.push('e');
        number.push_str(&exponent);
    }
    let v: f64 = number.parse().map_err(|_| err(text, "not a number"))?;
    let v = sign * v * mult;
    if !v.is_finite() {
        return Err(err(text, "out of range"));
    }
    Ok(v)
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
    if v == 0.0 || !v.is_finite() {
        return (v, "");
    }
    let round = |m: f64| {
        let digits = m.abs().log10().floor() as i32 + 1;
        let scale = 10f64.powi(sig as i32 - digits);
        (m * scale).round() / scale
    };
    let mut exp3 = (((v.abs().log10() / 3.0).floor() as i32) * 3).clamp(-15, 12);
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
    let (m, p) = split_eng(v, sig);
    let num = trim_number(m, sig);
    if unit.is_empty() && p.is_empty() {
        num
    } else {
        format!("{num} {p}{unit}")
    }
}

/// Compact text that [`parse_value`] reads back: `4.7k`, `100n`, `1M`, using
/// `u` for micro so it can be typed. Up to four significant digits.
pub fn fmt_compact(v: f64) -> String {
    if !v.is_finite() {
        return format!("{v}");
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
        if c.is_control() {
            out.push_str(&c.escape_unicode().to_string());
        } else {
            out.push(c);
        }
    }
    out
}

#[cfg(test)]
mod printable_tests {
    use super::printable;

    #[test]
    fn controls_are_escaped() {
        // ESC (U+001B), BEL (U+0007), DEL (U+007F) and CSI (U+009B) are
        // controls in ISO/IEC 6429; µ and Ω are not.
        assert_eq!(
            printable("a\u{1b}[2Jb\u{7}\u{7f}\u{9b}µΩ"),
            "a\\u{1b}[2Jb\\u{7}\\u{7f}\\u{9b}µΩ"
        );
    }
}
