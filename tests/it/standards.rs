//! Values and E-series against the published standards:
//! IEC 60063:2015 (preferred number series for resistors and capacitors)
//! and IEC 60062:2016 (marking codes: the RKM letter-and-digit code).

use crate::support::cli::bin;
use loopwright::model::values::{parse_non_negative, parse_positive, parse_value};
use loopwright::model::Series;

// IEC 60063, table 1 (E3 ... E24), two-digit values of one decade.
const IEC_E3: [f64; 3] = [1.0, 2.2, 4.7];
const IEC_E6: [f64; 6] = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8];
const IEC_E12: [f64; 12] = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2];
const IEC_E24: [f64; 24] = [
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6,
    6.2, 6.8, 7.5, 8.2, 9.1,
];
// IEC 60063, table 2 (E48 ... E192), three-digit values of one decade.
const IEC_E48: [f64; 48] = [
    1.00, 1.05, 1.10, 1.15, 1.21, 1.27, 1.33, 1.40, 1.47, 1.54, 1.62, 1.69, 1.78, 1.87, 1.96, 2.05,
    2.15, 2.26, 2.37, 2.49, 2.61, 2.74, 2.87, 3.01, 3.16, 3.32, 3.48, 3.65, 3.83, 4.02, 4.22, 4.42,
    4.64, 4.87, 5.11, 5.36, 5.62, 5.90, 6.19, 6.49, 6.81, 7.15, 7.50, 7.87, 8.25, 8.66, 9.09, 9.53,
];
const IEC_E96: [f64; 96] = [
    1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30, 1.33, 1.37, 1.40, 1.43,
    1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74, 1.78, 1.82, 1.87, 1.91, 1.96, 2.00, 2.05, 2.10,
    2.15, 2.21, 2.26, 2.32, 2.37, 2.43, 2.49, 2.55, 2.61, 2.67, 2.74, 2.80, 2.87, 2.94, 3.01, 3.09,
    3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74, 3.83, 3.92, 4.02, 4.12, 4.22, 4.32, 4.42, 4.53,
    4.64, 4.75, 4.87, 4.99, 5.11, 5.23, 5.36, 5.49, 5.62, 5.76, 5.90, 6.04, 6.19, 6.34, 6.49, 6.65,
    6.81, 6.98, 7.15, 7.32, 7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76,
];
const IEC_E192: [f64; 192] = [
    1.00, 1.01, 1.02, 1.04, 1.05, 1.06, 1.07, 1.09, 1.10, 1.11, 1.13, 1.14, 1.15, 1.17, 1.18, 1.20,
    1.21, 1.23, 1.24, 1.26, 1.27, 1.29, 1.30, 1.32, 1.33, 1.35, 1.37, 1.38, 1.40, 1.42, 1.43, 1.45,
    1.47, 1.49, 1.50, 1.52, 1.54, 1.56, 1.58, 1.60, 1.62, 1.64, 1.65, 1.67, 1.69, 1.72, 1.74, 1.76,
    1.78, 1.80, 1.82, 1.84, 1.87, 1.89, 1.91, 1.93, 1.96, 1.98, 2.00, 2.03, 2.05, 2.08, 2.10, 2.13,
    2.15, 2.18, 2.21, 2.23, 2.26, 2.29, 2.32, 2.34, 2.37, 2.40, 2.43, 2.46, 2.49, 2.52, 2.55, 2.58,
    2.61, 2.64, 2.67, 2.71, 2.74, 2.77, 2.80, 2.84, 2.87, 2.91, 2.94, 2.98, 3.01, 3.05, 3.09, 3.12,
    3.16, 3.20, 3.24, 3.28, 3.32, 3.36, 3.40, 3.44, 3.48, 3.52, 3.57, 3.61, 3.65, 3.70, 3.74, 3.79,
    3.83, 3.88, 3.92, 3.97, 4.02, 4.07, 4.12, 4.17, 4.22, 4.27, 4.32, 4.37, 4.42, 4.48, 4.53, 4.59,
    4.64, 4.70, 4.75, 4.81, 4.87, 4.93, 4.99, 5.05, 5.11, 5.17, 5.23, 5.30, 5.36, 5.42, 5.49, 5.56,
    5.62, 5.69, 5.76, 5.83, 5.90, 5.97, 6.04, 6.12, 6.19, 6.26, 6.34, 6.42, 6.49, 6.57, 6.65, 6.73,
    6.81, 6.90, 6.98, 7.06, 7.15, 7.23, 7.32, 7.41, 7.50, 7.59, 7.68, 7.77, 7.87, 7.96, 8.06, 8.16,
    8.25, 8.35, 8.45, 8.56, 8.66, 8.76, 8.87, 8.98, 9.09, 9.20, 9.31, 9.42, 9.53, 9.65, 9.76, 9.88,
];

fn tables() -> Vec<(Series, &'static [f64])> {
    vec![
        (Series::E3, &IEC_E3),
        (Series::E6, &IEC_E6),
        (Series::E12, &IEC_E12),
        (Series::E24, &IEC_E24),
        (Series::E48, &IEC_E48),
        (Series::E96, &IEC_E96),
        (Series::E192, &IEC_E192),
    ]
}

#[test]
fn every_series_matches_the_iec_60063_table() {
    for (series, table) in tables() {
        let ours = series.base_values();
        assert_eq!(ours.len(), table.len(), "{series} length");
        for (i, (a, b)) in ours.iter().zip(table.iter()).enumerate() {
            assert!((a - b).abs() < 1e-9, "{series}[{i}]: {a} vs IEC {b}");
        }
    }
}

#[test]
fn the_table_is_not_the_rounded_formula() {
    // IEC 60063: E24 departs from round(10^(i/24), 1 decimal) at eight places
    // (2.7 3.0 3.3 3.6 3.9 4.3 4.7 8.2), and E192 at one (9.20 where the
    // formula gives 9.19). A formula-built table would fail here.
    let off = |series: Series, decimals: i32| -> Vec<f64> {
        let n = series.base_values().len() as f64;
        let scale = 10f64.powi(decimals);
        series
            .base_values()
            .iter()
            .enumerate()
            .filter(|(i, v)| {
                let formula = (10f64.powf(*i as f64 / n) * scale).round() / scale;
                (formula - **v).abs() > 1e-9
            })
            .map(|(_, v)| *v)
            .collect()
    };
    assert_eq!(
        off(Series::E24, 1),
        vec![2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2]
    );
    assert_eq!(off(Series::E192, 2), vec![9.20]);
}

#[test]
fn coarser_series_are_every_second_value_of_finer_ones() {
    // IEC 60063: E3 ⊂ E6 ⊂ E12 ⊂ E24 and E48 ⊂ E96 ⊂ E192, taking every second value.
    for (coarse, fine) in [
        (Series::E3, Series::E6),
        (Series::E6, Series::E12),
        (Series::E12, Series::E24),
        (Series::E48, Series::E96),
        (Series::E96, Series::E192),
    ] {
        let f = fine.base_values();
        let every_second: Vec<f64> = f.iter().step_by(2).copied().collect();
        assert_eq!(coarse.base_values(), every_second, "{coarse} in {fine}");
    }
}

#[test]
fn usual_tolerances() {
    // IEC 60063 pairs the series with tolerances (from memory): E6 ±20 %,
    // E12 ±10 %, E24 ±5 %, E48 ±2 %, E96 ±1 %, E192 ±0.5 %.
    let want = [
        (Series::E6, 0.20),
        (Series::E12, 0.10),
        (Series::E24, 0.05),
        (Series::E48, 0.02),
        (Series::E96, 0.01),
        (Series::E192, 0.005),
    ];
    for (s, t) in want {
        assert_eq!(s.usual_tolerance(), t, "{s}");
    }
    assert!(Series::E3.usual_tolerance() > 0.2);
}

#[test]
fn stepping_crosses_decades() {
    // Neighbours read off the IEC 60063 tables above.
    assert_eq!(Series::E24.next_above(10_000.0), 11_000.0);
    assert_eq!(Series::E24.next_below(10_000.0), 9_100.0);
    assert!((Series::E24.next_above(9_100.0) - 10_000.0).abs() < 1e-6);
    assert!((Series::E96.next_above(976.0) - 1_000.0).abs() < 1e-9);
    assert!((Series::E96.next_below(1_000.0) - 976.0).abs() < 1e-9);
    assert!((Series::E12.next_above(8.2e-9) - 10e-9).abs() < 1e-20);
    assert!((Series::E3.next_below(1.0) - 0.47).abs() < 1e-12);
    // A value between two members steps to the members around it.
    assert!((Series::E24.next_above(4_800.0) - 5_100.0).abs() < 1e-9);
    assert!((Series::E24.next_below(4_800.0) - 4_700.0).abs() < 1e-9);
}

#[test]
fn nearest_and_membership() {
    assert!((Series::E12.nearest(4_800.0) - 4_700.0).abs() < 1e-9);
    assert!((Series::E24.nearest(9_600.0) - 10_000.0).abs() < 1e-9);
    assert!((Series::E96.nearest(10_050.0) - 10_000.0).abs() < 1e-9);
    assert!((Series::E192.nearest(9_210.0) - 9_200.0).abs() < 1e-9);
    // Nearest is by ratio (geometric midpoints), as the series are spaced
    // evenly in log and their tolerances are relative (IEC 60063's
    // construction; common practice for rounding to a series): 5.14 k lies
    // between E12's 4.7 k and 5.6 k above the geometric midpoint
    // √(4.7·5.6) k ≈ 5.130 k but below the arithmetic one (5.15 k), so it
    // rounds up; 5.12 k rounds down either way.
    assert!(((4.7f64 * 5.6).sqrt() - 5.1303).abs() < 1e-4);
    assert!((Series::E12.nearest(5_140.0) - 5_600.0).abs() < 1e-9);
    assert!((Series::E12.nearest(5_120.0) - 4_700.0).abs() < 1e-9);
    // E24 1.0 k / 1.1 k: geometric midpoint √1.1 k ≈ 1.0488 k, so 1.05 k
    // (the arithmetic midpoint) goes up.
    assert!((Series::E24.nearest(1_050.0) - 1_100.0).abs() < 1e-9);
    assert!((Series::E24.nearest(1_048.0) - 1_000.0).abs() < 1e-9);
    assert!(Series::E24.contains(47_000.0));
    assert!(!Series::E12.contains(51_000.0));
    assert!(Series::E192.contains(9.2));
}

#[test]
fn series_command_prints_one_decade() {
    // Every series against its IEC 60063 table, printed with the table's
    // digits (two for E3…E24, three for E48…E192).
    for (series, table) in tables() {
        let out = bin()
            .args(["series", &series.to_string()])
            .output()
            .unwrap();
        assert!(out.status.success(), "{series}");
        let text = String::from_utf8(out.stdout).unwrap();
        let values: Vec<f64> = text.lines().map(|l| l.trim().parse().unwrap()).collect();
        assert_eq!(values, table.to_vec(), "{series}");
        let decimals = if table.len() <= 24 { 1 } else { 2 };
        for l in text.lines() {
            assert_eq!(
                l.trim().split('.').nth(1).map(str::len),
                Some(decimals),
                "{series}: {l}"
            );
        }
    }
    let out = bin().args(["series", "E7"]).output().unwrap();
    assert!(!out.status.success());
    assert!(out.stdout.is_empty());
    assert!(String::from_utf8_lossy(&out.stderr).contains("E7"));
}

#[test]
fn rkm_code_examples() {
    // IEC 60062 RKM code: the letter stands for the decimal point and the
    // multiplier (R = 1, k = 10³, M = 10⁶, G = 10⁹; p, n, u/µ, m for capacitors).
    let cases = [
        ("R47", 0.47),
        ("4R7", 4.7),
        ("47R", 47.0),
        ("470R", 470.0),
        ("2R2", 2.2),
        ("4k7", 4_700.0),
        ("47k", 47_000.0),
        ("1M0", 1.0e6),
        ("2M2", 2.2e6),
        ("1G0", 1.0e9),
        ("6n8", 6.8e-9),
        ("4p7", 4.7e-12),
        ("2u2", 2.2e-6),
        ("2µ2", 2.2e-6),
        ("3m3", 3.3e-3),
    ];
    for (text, want) in cases {
        let got = parse_value(text).unwrap();
        assert!(
            (got - want).abs() <= 1e-12 * want,
            "{text}: {got} vs {want}"
        );
    }
}

#[test]
fn capital_k_is_kilo_as_in_iec_60062() {
    // IEC 60062 writes the resistor multiplier letters in capitals (4K7,
    // from memory); the lower-case k of the SI prefix means the same. M and m
    // stay distinct: mega and milli (SI Brochure, 9th edition).
    for (upper, lower, want) in [
        ("4K7", "4k7", 4_700.0),
        ("47K", "47k", 47_000.0),
        ("1K0", "1k0", 1_000.0),
        ("4.7K", "4.7k", 4_700.0),
    ] {
        assert_eq!(parse_value(upper).unwrap(), want, "{upper}");
        assert_eq!(
            parse_value(upper).unwrap(),
            parse_value(lower).unwrap(),
            "{upper} = {lower}"
        );
    }
    assert_eq!(parse_value("2M2").unwrap(), 2.2e6);
    assert!((parse_value("2m2").unwrap() - 2.2e-3).abs() < 1e-15);
}

#[test]
fn si_prefixes() {
    // SI prefixes (SI Brochure, 9th edition): f 1e-15, p 1e-12, n 1e-9, µ 1e-6, m 1e-3, k 1e3, M 1e6, G 1e9.
    let cases = [
        ("4.7k", 4_700.0),
        ("100n", 100.0e-9),
        ("2.2u", 2.2e-6),
        ("2.2µ", 2.2e-6),
        ("10p", 10.0e-12),
        ("5f", 5.0e-15),
        ("1.5M", 1.5e6),
        ("1G", 1.0e9),
        ("0.5m", 0.5e-3),
        ("1e3", 1.0e3),
        ("2.5e-6", 2.5e-6),
        ("1000", 1000.0),
        ("4.7kΩ", 4_700.0),
        ("100nF", 100.0e-9),
        ("1 kHz", 1_000.0),
        ("-3.3", -3.3),
    ];
    for (text, want) in cases {
        let got = parse_value(text).unwrap();
        assert!(
            (got - want).abs() <= 1e-12 * want.abs(),
            "{text}: {got} vs {want}"
        );
    }
}

#[test]
fn bad_value_text_is_an_error_naming_the_text() {
    for text in [
        "4k7k", "abc", "1..2", "k", "4k7.5", "1e", "12x", "--1", "4.7 k k",
    ] {
        let e = parse_value(text).expect_err(text);
        assert!(e.to_string().contains(text.trim()), "{text}: {e}");
    }
    let e = parse_value("").unwrap_err();
    assert!(e.to_string().contains("empty"));
    let e = parse_value("   ").unwrap_err();
    assert!(e.to_string().contains("empty"));
    let e = parse_positive("-1k").unwrap_err();
    assert!(e.to_string().contains("-1k"), "{e}");
    assert!(parse_positive("0").is_err());
    assert!(parse_non_negative("0").is_ok());
    assert!(parse_non_negative("-1p").is_err());
}

#[test]
fn stepped_values_are_the_clean_series_decimals() {
    // Stepping a capacitor along E12 from 33 pF: the next value is 39 pF
    // (IEC 60063 E12), which must be the double nearest 3.9e-11 so a save
    // writes `3.9e-11`, not `3.8999999999999995e-11`.
    let up = Series::E12.next_above(33e-12);
    assert_eq!(up, 3.9e-11);
    assert_eq!(format!("{up:?}"), "3.9e-11");
    // Every value reached by stepping, in every series, over picofarads to
    // megohms, is the same decimal written with the series' digits.
    for s in [Series::E12, Series::E24, Series::E96] {
        let mut v = 1e-12;
        while v < 1e7 {
            let next = s.next_above(v);
            let clean: f64 = format!("{next:.*e}", s.digits() - 1).parse().unwrap();
            assert_eq!(next, clean, "{s} above {v:e}");
            assert_eq!(s.next_below(next * 1.005), next, "{s} below");
            v = next;
        }
    }
}
