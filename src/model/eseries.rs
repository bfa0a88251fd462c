//! The IEC 60063 preferred-number series E3 … E192, as the standard
//! tabulates them (not the rounded geometric formula), with stepping and
//! snapping across decades.

use crate::model::names::names_of;
use serde::{Deserialize, Serialize};
use std::fmt;

/// One of the seven IEC 60063 series.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Series {
    E3,
    E6,
    E12,
    E24,
    E48,
    E96,
    E192,
}

const E3: [u16; 3] = [10, 22, 47];
const E6: [u16; 6] = [10, 15, 22, 33, 47, 68];
const E12: [u16; 12] = [10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82];
const E24: [u16; 24] = [
    10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91,
];
const E48: [u16; 48] = [
    100, 105, 110, 115, 121, 127, 133, 140, 147, 154, 162, 169, 178, 187, 196, 205, 215, 226, 237,
    249, 261, 274, 287, 301, 316, 332, 348, 365, 383, 402, 422, 442, 464, 487, 511, 536, 562, 590,
    619, 649, 681, 715, 750, 787, 825, 866, 909, 953,
];
const E96: [u16; 96] = [
    100, 102, 105, 107, 110, 113, 115, 118, 121, 124, 127, 130, 133, 137, 140, 143, 147, 150, 154,
    158, 162, 165, 169, 174, 178, 182, 187, 191, 196, 200, 205, 210, 215, 221, 226, 232, 237, 243,
    249, 255, 261, 267, 274, 280, 287, 294, 301, 309, 316, 324, 332, 340, 348, 357, 365, 374, 383,
    392, 402, 412, 422, 432, 442, 453, 464, 475, 487, 499, 511, 523, 536, 549, 562, 576, 590, 604,
    619, 634, 649, 665, 681, 698, 715, 732, 750, 768, 787, 806, 825, 845, 866, 887, 909, 931, 953,
    976,
];
const E192: [u16; 192] = [
    100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114, 115, 117, 118, 120, 121, 123, 124,
    126, 127, 129, 130, 132, 133, 135, 137, 138, 140, 142, 143, 145, 147, 149, 150, 152, 154, 156,
    158, 160, 162, 164, 165, 167, 169, 172, 174, 176, 178, 180, 182, 184, 187, 189, 191, 193, 196,
    198, 200, 203, 205, 208, 210, 213, 215, 218, 221, 223, 226, 229, 232, 234, 237, 240, 243, 246,
    249, 252, 255, 258, 261, 264, 267, 271, 274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309,
    312, 316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361, 365, 370, 374, 379, 383, 388,
    392, 397, 402, 407, 412, 417, 422, 427, 432, 437, 442, 448, 453, 459, 464, 470, 475, 481, 487,
    493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556, 562, 569, 576, 583, 590, 597, 604, 612,
    619, 626, 634, 642, 649, 657, 665, 673, 681, 690, 698, 706, 715, 723, 732, 741, 750, 759, 768,
    777, 787, 796, 806, 816, 825, 835, 845, 856, 866, 876, 887, 898, 909, 920, 931, 942, 953, 965,
    976, 988,
];

/// Relative tolerance for "this value is on the series" (covers values
/// typed with a few digits, and floating-point noise).
const ON_SERIES_REL: f64 = 1e-3;

impl Series {
    pub const ALL: [Series; 7] = [
        Series::E3,
        Series::E6,
        Series::E12,
        Series::E24,
        Series::E48,
        Series::E96,
        Series::E192,
    ];
    /// Their names, as in a stage file and on the command line.
    pub const NAMES: [&'static str; 7] = names_of!(Series, 7);

    /// The table's integer entries for one decade (2 digits up to E24, 3 above).
    pub fn table(self) -> &'static [u16] {
        match self {
            Series::E3 => &E3,
            Series::E6 => &E6,
            Series::E12 => &E12,
            Series::E24 => &E24,
            Series::E48 => &E48,
            Series::E96 => &E96,
            Series::E192 => &E192,
        }
    }

    /// Significant digits of the table (2 for E3…E24, 3 for E48…E192).
    pub fn digits(self) -> usize {
        match self {
            Series::E3 | Series::E6 | Series::E12 | Series::E24 => 2,
            _ => 3,
        }
    }

    /// Base values of one decade, 1.0 up to below 10.
    pub fn base_values(self) -> Vec<f64> {
        let scale = if self.digits() == 2 { 10.0 } else { 100.0 };
        self.table().iter().map(|&v| v as f64 / scale).collect()
    }

    /// The tolerance usually paired with the series (IEC 60063).
    pub fn usual_tolerance(self) -> f64 {
        match self {
            Series::E3 => 0.4,
            Series::E6 => 0.2,
            Series::E12 => 0.1,
            Series::E24 => 0.05,
            Series::E48 => 0.02,
            Series::E96 => 0.01,
            Series::E192 => 0.005,
        }
    }

    /// The next series in the cycle E3 → E6 → … → E192 → E3.
    pub fn cycle(self) -> Series {
        let i = Series::ALL.iter().position(|s| *s == self).unwrap_or(0);
        Series::ALL[(i + 1) % Series::ALL.len()]
    }

    pub fn parse(name: &str) -> Option<Series> {
        Series::ALL
            .into_iter()
            .find(|s| s.name().eq_ignore_ascii_case(name.trim()))
    }

    pub const fn name(self) -> &'static str {
        match self {
            Series::E3 => "E3",
            Series::E6 => "E6",
            Series::E12 => "E12",
            Series::E24 => "E24",
            Series::E48 => "E48",
            Series::E96 => "E96",
            Series::E192 => "E192",
        }
    }

    /// Decade exponent and the base value in [1, 10) for a positive value.
    fn decade(value: f64) -> i32 {
        let mut d = value.log10().floor() as i32;
        // Guard against log10 rounding just below an exact power of ten.
        if value / 10f64.powi(d + 1) >= 1.0 - 1e-12 {
            d += 1;
        }
        d
    }

    /// Series values around one decade: the decade below, this one and the
    /// next, in increasing order, each the table's integer times a power of
    /// ten so it is the correctly rounded decimal (39 pF is 3.9e-11, not
    /// 3.8999999999999995e-11, and saves as such).
    fn around(self, value: f64) -> Vec<f64> {
        let d = Self::decade(value);
        let shift = self.digits() as i32 - 1;
        let mut out = Vec::with_capacity(self.table().len() * 3 + 1);
        for dd in [d - 1, d, d + 1] {
            let e = dd - shift;
            out.extend(self.table().iter().map(|&t| {
                if e >= 0 {
                    t as f64 * 10f64.powi(e)
                } else {
                    t as f64 / 10f64.powi(-e)
                }
            }));
        }
        out.push(10f64.powi(d + 2));
        out
    }

    /// Smallest series value strictly above `value` (crossing decades).
    pub fn next_above(self, value: f64) -> f64 {
        if value <= 0.0 || !value.is_finite() {
            return self.base_values()[0];
        }
        self.around(value)
            .into_iter()
            .find(|v| *v > value * (1.0 + ON_SERIES_REL))
            .unwrap_or(value * 10.0)
    }

    /// Largest series value strictly below `value` (crossing decades).
    pub fn next_below(self, value: f64) -> f64 {
        if value <= 0.0 || !value.is_finite() {
            return self.base_values()[0];
        }
        self.around(value)
            .into_iter()
            .rev()
            .find(|v| *v < value * (1.0 - ON_SERIES_REL))
            .unwrap_or(value / 10.0)
    }

    /// The series value nearest to `value` by ratio (log distance).
    pub fn nearest(self, value: f64) -> f64 {
        if value <= 0.0 || !value.is_finite() {
            return self.base_values()[0];
        }
        self.around(value)
            .into_iter()
            .min_by(|a, b| {
                let da = (a / value).ln().abs();
                let db = (b / value).ln().abs();
                da.total_cmp(&db)
            })
            .unwrap_or(value)
    }

    /// Whether `value` is (within 0.1 %) a member of the series.
    pub fn contains(self, value: f64) -> bool {
        if value <= 0.0 || !value.is_finite() {
            return false;
        }
        let n = self.nearest(value);
        ((n - value) / value).abs() <= ON_SERIES_REL
    }
}

impl fmt::Display for Series {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// Capacitors step along E12 (common practice).
pub const CAPACITOR_SERIES: Series = Series::E12;

/// Slack for "inside the range" at the ends of [`Series::values_between`]
/// (a typed `1k` is 1000 exactly; this only absorbs rounding).
const RANGE_REL: f64 = 1e-9;

impl Series {
    /// Every series value from `lo` to `hi` (both ends included), in
    /// increasing order, each computed as the table's integer times a power
    /// of ten so it is the correctly rounded decimal (4.7 kΩ is 4700, not
    /// 4700.000000000001). Empty when the range holds no value.
    pub fn values_between(self, lo: f64, hi: f64) -> Vec<f64> {
        if !(lo > 0.0 && hi >= lo && hi.is_finite()) {
            return Vec::new();
        }
        let shift = self.digits() as i32 - 1;
        let (first, last) = (Self::decade(lo) - 1, Self::decade(hi) + 1);
        let mut out = Vec::new();
        for d in first..=last {
            let e = d - shift;
            for &t in self.table() {
                let v = if e >= 0 {
                    t as f64 * 10f64.powi(e)
                } else {
                    t as f64 / 10f64.powi(-e)
                };
                if v >= lo * (1.0 - RANGE_REL) && v <= hi * (1.0 + RANGE_REL) {
                    out.push(v);
                }
            }
        }
        out
    }
}
