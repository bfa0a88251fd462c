//! One figure's statistics over the Monte Carlo trials, taken as the
//! trials arrive in bounded memory ([`Stream`]).
//!
//! Up to [`EXACT_TRIALS`] trials every value is kept and the statistics
//! are computed from them all, as a sort and two passes would. Beyond it
//! the kept values are dropped and the statistics come from what was
//! streamed beside them from the first trial:
//! - the mean and deviation by Welford's running update ([`Moments`]),
//!   min and max as they come;
//! - the percentiles from the [`TAIL`] smallest and largest values: exact,
//!   because the 0.135 % and 99.865 % points of at most 1 000 000 trials
//!   (`spread.trials`' range) lie among them;
//! - the histogram from [`FINE_BINS`] equal sub-bins whose range starts at
//!   the first two different values and doubles (pairs of sub-bins merged)
//!   to take in a value outside it; at the end each sub-bin's count goes to
//!   the bin from min to max its centre is in. The range never exceeds
//!   four times max − min (`grid_width`), so a sub-bin is at most 1/64 of
//!   a bin: a trial is counted in the neighbouring bin only when it lies
//!   within half a sub-bin (1/128 of a bin) of the edge between them.

/// Histogram bins from min to max.
pub const BINS: usize = 20;
/// The Monte Carlo percentiles: ±3σ of a normal distribution.
pub const P_LOW: f64 = 0.00135;
pub const P_HIGH: f64 = 0.99865;
/// Up to this many trials every value is kept: the statistics are exact.
pub const EXACT_TRIALS: usize = 10_000;
/// The smallest and the largest values kept for the percentiles.
pub const TAIL: usize = 2048;
/// The sub-bins the streamed histogram counts in.
pub const FINE_BINS: usize = BINS * 256;
/// The most trials whose percentiles the tails hold exactly (the
/// `spread.trials` range ends at 10⁶).
pub const EXACT_PERCENTILES_UP_TO: usize = ((TAIL - 2) as f64 / P_LOW) as usize;
const _: () = assert!(EXACT_PERCENTILES_UP_TO >= 1_000_000);

/// The p-quantile of sorted values: h = (n − 1)·p, linear between the
/// neighbours of h.
pub fn quantile(sorted: &[f64], p: f64) -> Option<f64> {
    let n = sorted.len();
    if n == 0 {
        return None;
    }
    quantile_by(n, p, |i| sorted[i])
}

/// The p-quantile of n sorted values read by rank.
fn quantile_by(n: usize, p: f64, at: impl Fn(usize) -> f64) -> Option<f64> {
    let h = (n - 1) as f64 * p;
    let (lo, hi) = (h.floor() as usize, h.ceil() as usize);
    Some(at(lo) + (h - lo as f64) * (at(hi) - at(lo)))
}

/// The bin of `v` among 20 equal bins from min to max (the first when
/// min = max or either is unbounded).
fn bin(v: f64, min: f64, max: f64) -> usize {
    let i = if max > min {
        (((v - min) / (max - min)) * BINS as f64).floor() as usize
    } else {
        0
    };
    i.min(BINS - 1)
}

/// 20 equal bins from min to max (all in the first when min = max).
pub fn histogram(values: &[f64], min: f64, max: f64) -> [usize; BINS] {
    let mut h = [0; BINS];
    for &v in values {
        h[bin(v, min, max)] += 1;
    }
    h
}

/// Mean and sample variance by Welford's update: each value moves the
/// mean by its distance over the count, and the sum of squared distances
/// by that distance times the distance to the new mean (no large sums
/// that cancel).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Moments {
    n: u64,
    mean: f64,
    m2: f64,
}

impl Moments {
    pub fn push(&mut self, x: f64) {
        self.n += 1;
        let d = x - self.mean;
        self.mean += d / self.n as f64;
        self.m2 += d * (x - self.mean);
    }

    pub fn mean(&self) -> Option<f64> {
        (self.n > 0).then_some(self.mean)
    }

    /// Sample standard deviation (n − 1).
    pub fn std(&self) -> Option<f64> {
        (self.n > 1).then(|| (self.m2 / (self.n - 1) as f64).sqrt())
    }
}

/// The [`TAIL`] smallest and largest values seen.
#[derive(Debug, Clone)]
struct Tails {
    low: Vec<f64>,
    high: Vec<f64>,
}

impl Tails {
    fn new() -> Tails {
        Tails {
            low: Vec::with_capacity(2 * TAIL),
            high: Vec::with_capacity(2 * TAIL),
        }
    }

    fn push(&mut self, x: f64) {
        keep_least(&mut self.low, x, f64::total_cmp);
        keep_least(&mut self.high, x, |a, b| b.total_cmp(a));
    }

    /// The value of rank r (0 the smallest) among n, where the tails hold it.
    fn rank(&self, r: usize, n: usize) -> f64 {
        if r < self.low.len() {
            self.low[r]
        } else {
            self.high[n - 1 - r]
        }
    }
}

/// Push `x`, and when the buffer is full keep its [`TAIL`] least by `cmp`.
fn keep_least(v: &mut Vec<f64>, x: f64, cmp: impl Fn(&f64, &f64) -> std::cmp::Ordering) {
    v.push(x);
    if v.len() == 2 * TAIL {
        v.select_nth_unstable_by(TAIL - 1, &cmp);
        v.truncate(TAIL);
    }
}

/// Counts in [`FINE_BINS`] sub-bins of width `w` from `lo`; before two
/// different finite values arrive, only the first and its count.
#[derive(Debug, Clone)]
struct Fine {
    lo: f64,
    w: f64,
    counts: Vec<u64>,
    first: Option<(f64, u64)>,
}

impl Fine {
    fn new() -> Fine {
        Fine {
            lo: 0.0,
            w: 0.0,
            counts: vec![0; FINE_BINS],
            first: None,
        }
    }

    fn push(&mut self, x: f64) {
        match self.first {
            None => self.first = Some((x, 1)),
            Some((a, n)) if self.w == 0.0 && x == a => self.first = Some((a, n + 1)),
            Some((a, n)) if self.w == 0.0 => {
                // The range starts at the two values, the larger inside it.
                self.lo = a.min(x);
                self.w = ((a - x).abs() / (FINE_BINS - 1) as f64).max(f64::MIN_POSITIVE);
                let (ia, ix) = (self.index(a), self.index(x));
                self.counts[ia] += n;
                self.counts[ix] += 1;
            }
            Some(_) => {
                while x < self.lo || self.index(x) >= FINE_BINS {
                    self.double(x < self.lo);
                }
                let i = self.index(x);
                self.counts[i] += 1;
            }
        }
    }

    fn index(&self, x: f64) -> usize {
        ((x - self.lo) / self.w).floor() as usize
    }

    /// Twice the width: pairs of sub-bins merged into the lower half
    /// (the range grows up) or the upper half (it grows down).
    fn double(&mut self, down: bool) {
        let half = FINE_BINS / 2;
        let merged: Vec<u64> = (0..half)
            .map(|k| self.counts[2 * k] + self.counts[2 * k + 1])
            .collect();
        self.counts.fill(0);
        let at = if down { half } else { 0 };
        self.counts[at..at + half].copy_from_slice(&merged);
        if down {
            self.lo -= FINE_BINS as f64 * self.w;
        }
        self.w *= 2.0;
    }

    /// The sub-bins' counts moved into 20 bins from min to max, each by
    /// its centre.
    fn histogram(&self, min: f64, max: f64) -> [usize; BINS] {
        let mut h = [0; BINS];
        if let Some((_, n)) = self.first.filter(|_| self.w == 0.0) {
            h[0] = n as usize;
            return h;
        }
        for (k, c) in self.counts.iter().enumerate() {
            h[bin(self.lo + (k as f64 + 0.5) * self.w, min, max)] += *c as usize;
        }
        h
    }
}

/// One figure's statistics.
#[derive(Debug, Clone, PartialEq)]
pub struct Stats {
    pub mean: Option<f64>,
    pub std: Option<f64>,
    pub min: Option<f64>,
    pub max: Option<f64>,
    pub p_low: Option<f64>,
    pub p_high: Option<f64>,
    pub undefined: usize,
    pub histogram: [usize; BINS],
}

/// One figure's values as the trials arrive (None: undefined in that
/// trial). Its memory is allocated once and does not grow.
#[derive(Debug, Clone)]
pub struct Stream {
    defined: usize,
    undefined: usize,
    min: f64,
    max: f64,
    /// The finite values' moments (an unbounded value, a null CMRR,
    /// counts in the percentiles, not in the mean and deviation).
    moments: Moments,
    tails: Tails,
    /// The finite values' sub-bins; unbounded ones only counted.
    fine: Fine,
    unbounded: usize,
    /// Every defined value while there are at most [`EXACT_TRIALS`].
    kept: Vec<f64>,
}

impl Default for Stream {
    fn default() -> Stream {
        Stream::new()
    }
}

impl Stream {
    pub fn new() -> Stream {
        Stream {
            defined: 0,
            undefined: 0,
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
            moments: Moments::default(),
            tails: Tails::new(),
            fine: Fine::new(),
            unbounded: 0,
            kept: Vec::with_capacity(EXACT_TRIALS),
        }
    }

    pub fn push(&mut self, v: Option<f64>) {
        let Some(x) = v else {
            self.undefined += 1;
            return;
        };
        self.defined += 1;
        if self.defined <= EXACT_TRIALS {
            self.kept.push(x);
        } else {
            // Past the exact buffer: its values are in the streams already.
            self.kept.clear();
        }
        (self.min, self.max) = (self.min.min(x), self.max.max(x));
        self.tails.push(x);
        if x.is_finite() {
            self.moments.push(x);
            self.fine.push(x);
        } else {
            self.unbounded += 1;
        }
    }

    /// The bytes the state holds on the heap (its buffers' capacities).
    pub fn heap_bytes(&self) -> usize {
        let f = std::mem::size_of::<f64>();
        (self.kept.capacity() + self.tails.low.capacity() + self.tails.high.capacity()) * f
            + self.fine.counts.capacity() * std::mem::size_of::<u64>()
    }

    /// The range the streamed histogram's sub-bins cover (None before two
    /// different finite values).
    pub fn grid_width(&self) -> Option<f64> {
        (self.fine.w > 0.0).then_some(self.fine.w * FINE_BINS as f64)
    }

    /// The statistics: from every value up to [`EXACT_TRIALS`] defined
    /// trials, from the streams beyond.
    pub fn finish(&self) -> Stats {
        if self.defined <= EXACT_TRIALS {
            return exact(self.kept.clone(), self.undefined);
        }
        self.streamed()
    }

    /// The statistics from the streams alone (whatever the count).
    pub fn streamed(&self) -> Stats {
        let n = self.defined;
        let (mut low, mut high) = (self.tails.low.clone(), self.tails.high.clone());
        low.sort_by(f64::total_cmp);
        high.sort_by(|a, b| b.total_cmp(a));
        let tails = Tails { low, high };
        let (min, max) = (n > 0).then_some((self.min, self.max)).unzip();
        let histogram = match (min, max) {
            (Some(lo), Some(hi)) if self.unbounded == 0 => self.fine.histogram(lo, hi),
            // An unbounded min or max puts every value in the first bin.
            (Some(_), Some(_)) => {
                let mut h = [0; BINS];
                h[0] = n;
                h
            }
            _ => [0; BINS],
        };
        let still =
            matches!((min, max), (Some(a), Some(b)) if b - a <= 1e-12 * a.abs().max(b.abs()));
        let std = self.moments.std().map(|s| if still { 0.0 } else { s });
        let at = |p| {
            (n > 0)
                .then(|| quantile_by(n, p, |r| tails.rank(r, n)))
                .flatten()
        };
        Stats {
            mean: self.moments.mean(),
            std,
            min,
            max,
            p_low: at(P_LOW),
            p_high: at(P_HIGH),
            undefined: self.undefined,
            histogram,
        }
    }
}

/// The statistics of every defined value: sorted, the mean and deviation
/// of the finite ones in two passes.
pub fn exact(mut v: Vec<f64>, undefined: usize) -> Stats {
    v.sort_by(f64::total_cmp);
    let finite: Vec<f64> = v.iter().copied().filter(|x| x.is_finite()).collect();
    let nf = finite.len();
    let mean = (nf > 0).then(|| finite.iter().sum::<f64>() / nf as f64);
    let std = mean.filter(|_| nf > 1).map(|m| {
        let ss: f64 = finite.iter().map(|x| (x - m).powi(2)).sum();
        (ss / (nf - 1) as f64).sqrt()
    });
    let (min, max) = (v.first().copied(), v.last().copied());
    // A figure no part moves differs only by rounding between trials.
    let still = matches!((min, max), (Some(a), Some(b)) if b - a <= 1e-12 * a.abs().max(b.abs()));
    Stats {
        mean,
        std: if still { std.map(|_| 0.0) } else { std },
        min,
        max,
        p_low: quantile(&v, P_LOW),
        p_high: quantile(&v, P_HIGH),
        undefined,
        histogram: match (min, max) {
            (Some(lo), Some(hi)) => histogram(&v, lo, hi),
            _ => [0; BINS],
        },
    }
}
