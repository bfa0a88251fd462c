//! The spread's statistics taken as the trials arrive
//! (`study::tally::Stream`): the running mean and deviation against the
//! two-pass definition, the percentiles against a full sort, the streamed
//! histogram within its stated bound, and a state whose size does not
//! depend on the number of trials.

use loopwright::model::scenario::Dist;
use loopwright::study::spread::{draws, mix};
use loopwright::study::tally::{
    exact, histogram, Moments, Stream, BINS, EXACT_TRIALS, FINE_BINS, P_HIGH, P_LOW,
};

/// The trial draws of the spread itself (one knob, seed 7), uniform or
/// normal in [−1, 1].
fn trial_values(n: usize, dist: Dist) -> Vec<f64> {
    (0..n as u64).map(|i| draws(7, i, dist, 1)[0]).collect()
}

/// n values in [0, 1) from SplitMix64 (cheap, for the large counts).
fn unit_values(n: usize) -> Vec<f64> {
    (0..n as u64)
        .map(|i| (mix(i) >> 11) as f64 / (1u64 << 53) as f64)
        .collect()
}

/// The sample mean and standard deviation by their definitions, in two
/// passes: mean = Σx/n, s² = Σ(x − mean)²/(n − 1) (textbook formula).
fn two_pass(v: &[f64]) -> (f64, f64) {
    let n = v.len() as f64;
    let mean = v.iter().sum::<f64>() / n;
    let ss: f64 = v.iter().map(|x| (x - mean) * (x - mean)).sum();
    (mean, (ss / (n - 1.0)).sqrt())
}

/// The p-quantile by the README's definition (h = (n − 1)·p, linear
/// between the sorted values ⌊h⌋ and ⌈h⌉), computed here from a full sort.
fn sorted_quantile(v: &[f64], p: f64) -> f64 {
    let mut s = v.to_vec();
    s.sort_by(f64::total_cmp);
    let h = (s.len() - 1) as f64 * p;
    let (lo, hi) = (h.floor() as usize, h.ceil() as usize);
    s[lo] + (h - lo as f64) * (s[hi] - s[lo])
}

/// Welford's running update against the two-pass definition on the same
/// draws, far from zero (an offset of 1e8 on a deviation near 0.33):
/// a one-pass Σx² − n·mean² loses every digit there (1e16 against 1e-1).
#[test]
fn running_moments_match_the_two_pass_definition() {
    for dist in [Dist::Uniform, Dist::Normal] {
        let v: Vec<f64> = trial_values(20_000, dist)
            .iter()
            .map(|x| 1.0e8 + x)
            .collect();
        let mut m = Moments::default();
        v.iter().for_each(|x| m.push(*x));
        let (mean, std) = two_pass(&v);
        let dm = (m.mean().unwrap() - mean).abs();
        assert!(dm <= 1e-13 * mean, "{dist:?}: mean off by {dm}");
        // Welford's rounding grows with offset/σ (3e8 here): a few parts
        // in 1e9 of the deviation.
        let rel = (m.std().unwrap() - std).abs() / std;
        assert!(
            rel < 1e-8,
            "{dist:?}: std {} against {std}",
            m.std().unwrap()
        );
        // Uniform on ±1: σ = 1/√3; normal with 3σ = 1: about 1/3 (the
        // truncation at 3σ takes 1.35 % off): from the definitions.
        let sigma = if dist == Dist::Uniform {
            1.0 / 3f64.sqrt()
        } else {
            1.0 / 3.0
        };
        assert!((std - sigma).abs() < 0.02 * sigma, "{dist:?}: {std}");
    }
    // One value has no deviation; none has no mean.
    let mut one = Moments::default();
    assert_eq!(one.mean(), None);
    one.push(3.0);
    assert_eq!((one.mean(), one.std()), (Some(3.0), None));
}

/// Past the kept values the percentiles still equal a full sort's (the
/// tails hold them exactly up to 10⁶ trials, the accepted range's end);
/// min, max and the undefined count are exact; the moments agree with
/// the two-pass definition.
#[test]
fn streamed_percentiles_equal_a_full_sort_up_to_a_million() {
    let n = 1_000_000;
    let v = unit_values(n);
    let mut st = Stream::new();
    let size = st.heap_bytes();
    for (i, x) in v.iter().enumerate() {
        // Every 1000th trial undefined.
        st.push(Some(*x).filter(|_| i % 1000 != 999));
    }
    let defined: Vec<f64> = v
        .iter()
        .enumerate()
        .filter(|(i, _)| i % 1000 != 999)
        .map(|(_, x)| *x)
        .collect();
    let t = st.finish();
    assert_eq!(t.undefined, 1000);
    assert_eq!(t.p_low, Some(sorted_quantile(&defined, P_LOW)));
    assert_eq!(t.p_high, Some(sorted_quantile(&defined, P_HIGH)));
    let min = defined.iter().copied().fold(f64::INFINITY, f64::min);
    let max = defined.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    assert_eq!((t.min, t.max), (Some(min), Some(max)));
    let (mean, std) = two_pass(&defined);
    assert!((t.mean.unwrap() - mean).abs() < 1e-12);
    assert!((t.std.unwrap() - std).abs() < 1e-12);
    assert_eq!(t.histogram.iter().sum::<usize>(), defined.len());
    // The state's memory is what it was before the first trial.
    assert_eq!(st.heap_bytes(), size);
}

/// What the state holds does not depend on the number of trials: the
/// same bytes after 1, 10 000, 10 001 and 200 000 values (the kept values'
/// buffer is allocated once and emptied past it, not freed or grown).
#[test]
fn the_state_does_not_grow_with_the_trials() {
    let v = unit_values(200_000);
    let mut st = Stream::new();
    let empty = st.heap_bytes();
    assert!(empty > 0);
    for (i, x) in v.iter().enumerate() {
        st.push(Some(*x));
        if [1, EXACT_TRIALS, EXACT_TRIALS + 1, v.len()].contains(&(i + 1)) {
            assert_eq!(st.heap_bytes(), empty, "after {} trials", i + 1);
        }
    }
    // About 190 kB per figure (8-byte values: 10 000 kept, 2 × 4096 in
    // the tails' buffers, 5120 sub-bins).
    assert!(empty <= 8 * (10_000 + 2 * 4096 + 5120), "{empty}");
}

/// Up to 10 000 trials the statistics are those of every value (the
/// recorded outputs at 200 trials do not change).
#[test]
fn within_the_kept_values_the_statistics_are_exact() {
    let v = trial_values(EXACT_TRIALS, Dist::Normal);
    let mut st = Stream::new();
    v.iter().for_each(|x| st.push(Some(*x)));
    let t = st.finish();
    assert_eq!(t, exact(v.clone(), 0));
    let (mean, _) = two_pass(&v);
    assert!((t.mean.unwrap() - mean).abs() < 1e-15);
    assert_eq!(t.p_low, Some(sorted_quantile(&v, P_LOW)));
}

/// The bound the README states for the streamed histogram: a trial is
/// counted in the neighbouring bin only when it lies within 1/128 of a
/// bin's width of the edge between them; the sub-bins' range stays within
/// four times max − min.
fn assert_histogram_within_bound(name: &str, v: &[f64]) {
    let mut st = Stream::new();
    v.iter().for_each(|x| st.push(Some(*x)));
    assert!(v.len() > EXACT_TRIALS, "{name}: past the kept values");
    let t = st.finish();
    let (min, max) = (t.min.unwrap(), t.max.unwrap());
    let span = max - min;
    let grid = st.grid_width().unwrap();
    let sub = FINE_BINS as f64;
    assert!(
        grid <= 4.0 * span * sub / (sub - 1.0),
        "{name}: {grid} for {span}"
    );
    let want = histogram(v, min, max);
    assert_eq!(t.histogram.iter().sum::<usize>(), v.len(), "{name}");
    let bin = span / BINS as f64;
    let near = |edge: f64| {
        v.iter()
            .filter(|x| (*x - edge).abs() <= bin / 128.0)
            .count()
    };
    let mut moved = 0;
    for (i, (got, want)) in t.histogram.iter().zip(want).enumerate() {
        let diff = got.abs_diff(want);
        let lower = if i > 0 { near(min + i as f64 * bin) } else { 0 };
        let upper = if i + 1 < BINS {
            near(min + (i + 1) as f64 * bin)
        } else {
            0
        };
        assert!(
            diff <= lower + upper,
            "{name}: bin {i} {got} against {want} (near its edges: {})",
            lower + upper
        );
        moved += diff;
    }
    // Fewer than 2 % of the trials change bins (two edges of 1/128 each
    // per bin hold about 1/64 of a flat distribution's values).
    assert!(moved < v.len() / 50, "{name}: {moved} moved");
}

#[test]
fn the_streamed_histogram_stays_within_its_bound() {
    let normal = trial_values(30_000, Dist::Normal);
    assert_histogram_within_bound("normal", &normal);
    let uniform = trial_values(30_000, Dist::Uniform);
    assert_histogram_within_bound("uniform", &uniform);
    // The range grows many times both ways: values spreading outwards,
    // alternately above and below, over twelve decades.
    let outward: Vec<f64> = (0..20_000)
        .map(|i| {
            let x = 1.0e-6 * 1.0015f64.powi(i);
            if i % 2 == 0 {
                5.0 + x
            } else {
                5.0 - 0.3 * x
            }
        })
        .collect();
    assert_histogram_within_bound("outward", &outward);
    // Mostly one value, then a far one: the range starts at the first two
    // different values.
    let mut late: Vec<f64> = vec![2.0; 15_000];
    late.extend(unit_values(5_000).iter().map(|x| 2.0 + 1.0e3 * x));
    assert_histogram_within_bound("late", &late);
}

/// A value without bound (a null CMRR) is counted in the percentiles and
/// the first bin, not in the mean, as in the kept values' statistics.
#[test]
fn unbounded_values_count_as_the_kept_statistics_count_them() {
    let mut v = trial_values(EXACT_TRIALS + 500, Dist::Uniform);
    v[17] = f64::INFINITY;
    let mut st = Stream::new();
    v.iter().for_each(|x| st.push(Some(*x)));
    let t = st.finish();
    let e = exact(v.clone(), 0);
    assert_eq!((t.min, t.max, t.p_high), (e.min, e.max, e.p_high));
    assert_eq!(t.histogram, e.histogram);
    let finite: Vec<f64> = v.iter().copied().filter(|x| x.is_finite()).collect();
    assert!((t.mean.unwrap() - two_pass(&finite).0).abs() < 1e-12);
}
