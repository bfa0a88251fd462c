//! The spread against the propagation of errors, the corner extremes of
//! the resistor ratio, the variance of the uniform and truncated normal
//! distributions, the quantile definition, determinism across thread
//! counts, and the `spread`/`check` commands.

use crate::support::cli::{bin, temp_dir};
use crate::support::closed_forms::assert_rel;
use crate::support::stages::{in_range, plain};

use loopwright::engine::analysis::{analyze_to, FULL, TRIAL};
use loopwright::judge::Evaluation;
use loopwright::model::scenario::{Dist, Spec, Spread};
use loopwright::model::Scenario;
use loopwright::model::Topology;
use loopwright::study::spread::{self, draws, histogram, quantile, Run};

/// A non-inverting gain-11 stage on a near-ideal amplifier (a0 1e7, so the
/// loop gain's share of the gain error is about 1e-6), resistors ±t.
fn gain_stage(t: f64) -> Scenario {
    let mut s = in_range(plain(Topology::NonInverting, 1.0e3, 10.0e3));
    s.amp.a0 = 1.0e7;
    s.stage.tolerance = t;
    s
}

fn run(s: &Scenario, trials: u32) -> spread::SpreadResult {
    spread::spread(
        s,
        &Run {
            trials: Some(trials),
            ..Run::default()
        },
    )
}

/// First-order propagation of errors (e.g. Taylor, "An Introduction to
/// Error Analysis", ch. 3): G = 1 + rf/rg, ∂G/∂rf·rf = ∂G/∂rg·rg = ±(G − 1),
/// so σ_G² = (G − 1)²·(σ_rf² + σ_rg²) with relative σ of a uniform ±t of
/// t/√3 (variance a²/3 of a uniform on ±a): σ_G = (G − 1)·√2·t/√3.
#[test]
fn monte_carlo_sigma_matches_error_propagation() {
    let t = 0.01;
    let s = gain_stage(t);
    let r = run(&s, 10_000);
    let f = r.figure("dc_gain").unwrap();
    let want = 10.0 * 2f64.sqrt() * t / 3f64.sqrt();
    let got = f.std.unwrap();
    assert!(
        (got / want - 1.0).abs() < 0.03,
        "σ_G {got} against first-order {want}"
    );
    // The mean sits at the nominal to within a few standard errors.
    let se = want / 100.0;
    assert!((f.mean.unwrap() - f.nominal.unwrap()).abs() < 4.0 * se);
}

/// The gain's extremes are at the corners where the ratio is extreme:
/// G_max = 1 + rf(1 + t)/(rg(1 − t)), G_min = 1 + rf(1 − t)/(rg(1 + t))
/// (the monotonic ratio; worst-case analysis as in any circuit-tolerance
/// text). The finite loop gain (a0 1e7) moves them by about 1e-6.
#[test]
fn corner_extremes_of_the_gain() {
    let t = 0.05;
    let s = gain_stage(t);
    let r = run(&s, 200);
    let f = r.figure("dc_gain").unwrap();
    let g_max = 1.0 + 10.0e3 * (1.0 + t) / (1.0e3 * (1.0 - t));
    let g_min = 1.0 + 10.0e3 * (1.0 - t) / (1.0e3 * (1.0 + t));
    assert_rel("G_max", f.corner_max.unwrap(), g_max, 1e-5);
    assert_rel("G_min", f.corner_min.unwrap(), g_min, 1e-5);
    // ... at rf high, rg low and the other way round.
    let at = |c: &[(&str, f64)], field: &str| c.iter().find(|x| x.0 == field).unwrap().1;
    assert_eq!(at(&f.corner_max_at, "stage.rf"), 10.0e3 * (1.0 + t));
    assert_eq!(at(&f.corner_max_at, "stage.rg"), 1.0e3 * (1.0 - t));
    assert_eq!(at(&f.corner_min_at, "stage.rf"), 10.0e3 * (1.0 - t));
    // Every Monte Carlo trial lies inside the corner box.
    assert!(f.min.unwrap() >= f.corner_min.unwrap() && f.max.unwrap() <= f.corner_max.unwrap());
    assert_eq!(f.beyond_corners(), (false, false));
}

/// A uniform draw on [−1, 1] has mean 0 and variance 1/3; a normal of
/// σ = 1/3 truncated at ±3σ has variance σ²·(1 − 2·3·φ(3)/(2Φ(3) − 1))
/// (the truncated normal's variance, e.g. Johnson, Kotz & Balakrishnan,
/// "Continuous Univariate Distributions", vol. 1, ch. 13), with
/// φ(3) = 0.004431848 and Φ(3) = 0.998650102 (standard normal tables).
#[test]
fn draws_have_the_distributions_variance() {
    let moments = |dist: Dist| {
        let v: Vec<f64> = (0..20_000).flat_map(|i| draws(7, i, dist, 2)).collect();
        let n = v.len() as f64;
        let mean = v.iter().sum::<f64>() / n;
        let var = v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0);
        let max = v.iter().fold(0f64, |m, x| m.max(x.abs()));
        (mean, var, max)
    };
    let (mean, var, max) = moments(Dist::Uniform);
    assert!(mean.abs() < 0.01 && (var * 3.0 - 1.0).abs() < 0.02 && max <= 1.0);
    let (phi, cdf) = (0.004431848, 0.998650102);
    let want = (1.0 / 9.0) * (1.0 - 2.0 * 3.0 * phi / (2.0 * cdf - 1.0));
    let (mean, var, max) = moments(Dist::Normal);
    assert!(mean.abs() < 0.01 && (var / want - 1.0).abs() < 0.03 && max <= 1.0);
}

/// The quantile rule of the issue, h = (n − 1)·p with linear interpolation
/// (the same as the default "linear" method of NumPy's percentile, from
/// memory): [1, 2, 3, 4] at 0.5 gives 2.5, at 0.25 gives 1.75.
#[test]
fn quantile_and_histogram_definitions() {
    let v = [1.0, 2.0, 3.0, 4.0];
    assert_eq!(quantile(&v, 0.5), Some(2.5));
    assert_eq!(quantile(&v, 0.25), Some(1.75));
    assert_eq!(quantile(&v, 0.0), Some(1.0));
    assert_eq!(quantile(&v, 1.0), Some(4.0));
    assert_eq!(quantile(&[], 0.5), None);
    // 20 equal bins from min to max; the maximum falls in the last.
    let h = histogram(&[0.0, 0.049, 0.05, 0.5, 1.0], 0.0, 1.0);
    assert_eq!((h[0], h[1], h[10], h[19]), (2, 1, 1, 1));
    assert_eq!(histogram(&[3.0, 3.0], 3.0, 3.0)[0], 2);
}

/// The same seed gives the same output on one thread and on all.
#[test]
fn same_seed_same_result_on_any_thread_count() {
    let mut s = gain_stage(0.01);
    s.spread = Some(Spread {
        gbw_tol: Some(0.3),
        a0_min: Some(1.0e5),
        ..Spread::default()
    });
    let pool = |n| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build()
            .unwrap()
    };
    let one = pool(1).install(|| run(&s, 300));
    let all = pool(0).install(|| run(&s, 300));
    assert_eq!(one, all);
    let other_seed = spread::spread(
        &s,
        &Run {
            trials: Some(300),
            seed: Some(2),
            ..Run::default()
        },
    );
    assert_ne!(one.figures, other_seed.figures);
}

/// A one-sided limit set at the nominal value of a figure that spreads
/// symmetrically (f−3dB ∝ gbw for a one-pole amplifier, gbw uniform ±30 %)
/// passes about half the trials.
#[test]
fn limit_at_the_nominal_gives_half_yield() {
    let mut s = gain_stage(1.0e-5);
    s.spread = Some(Spread {
        gbw_tol: Some(0.3),
        ..Spread::default()
    });
    let f3 = analyze_to(&s, FULL).f_3db_hz.unwrap();
    s.spec = Some(Spec {
        f_3db_min: Some(f3),
        ..Spec::default()
    });
    let r = run(&s, 4000);
    let y = r.yield_frac.unwrap();
    assert!((y - 0.5).abs() < 0.035, "yield {y}");
    // A value equal to the limit passes: the nominal meets it.
    assert!(r.limits[0].nominal_pass);
}

/// The per-trial sweep is coarser; its figures agree with the full
/// analysis within the text report's precision on every scenario.
#[test]
fn trial_depth_agrees_with_the_full_analysis() {
    use loopwright::judge::figures::Unit;
    for entry in std::fs::read_dir("scenarios").unwrap() {
        let s = Scenario::load(&entry.unwrap().path()).unwrap();
        let eval = |d| Evaluation {
            analysis: analyze_to(&s, d),
            warnings: Vec::new(),
        };
        let (full, trial) = (eval(FULL), eval(TRIAL));
        for key in [
            "dc_gain",
            "f_3db_hz",
            "peaking_db",
            "phase_margin_deg",
            "gain_margin_db",
            "zout_dc_ohm",
            "noise_rms",
            "out_offset_max_v",
            "headroom_low_v",
            "headroom_high_v",
        ] {
            let (a, b) = (
                loopwright::judge::spread_figures::read(&full, key, 1.0),
                loopwright::judge::spread_figures::read(&trial, key, 1.0),
            );
            let (unit, _) = spread::unit_and_label(key, trial.analysis.gain_unit);
            let half = match unit.unit {
                Unit::Ratio => 5e-7,
                Unit::Db => 5e-3,
                Unit::Degrees => 5e-2,
                _ => 5e-4 * a.unwrap_or(0.0).abs(),
            };
            match (a, b) {
                (Some(a), Some(b)) => {
                    assert!((a - b).abs() <= half, "{} {key}: {a} vs {b}", s.title)
                }
                (a, b) => assert_eq!(a.is_some(), b.is_some(), "{} {key}", s.title),
            }
        }
    }
}

#[test]
fn a0_min_above_a0_is_refused() {
    let text = std::fs::read_to_string("scenarios/line_driver_cable.ron")
        .unwrap()
        .replace("a0_min: 100000.0", "a0_min: 400000.0");
    let e = Scenario::from_ron(&text, Some("x.ron")).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("spread.a0_min"));
    assert!(e.line.is_some() && e.message.contains("400000"), "{e}");
}

#[test]
fn a_gain_target_of_the_wrong_sign_is_refused() {
    // The textbook closed-loop gains: −rf/rg for the inverting stage,
    // 1 + rf/rg for the non-inverting one. A target of the other sign
    // would read as an error near −200 % on every board.
    let line = std::fs::read_to_string("scenarios/line_driver_cable.ron").unwrap();
    let wrong = line.replace("gain_target: 2.0", "gain_target: -2.0");
    let e = Scenario::from_ron(&wrong, Some("x.ron")).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("spec.gain_target"), "{e}");
    let inv = std::fs::read_to_string("scenarios/single_supply_inverter_clips.ron").unwrap();
    let with = |t: &str| {
        inv.replace(
            "band: (20.0, 50000.0),",
            &format!("band: (20.0, 50000.0),\n    spec: (gain_target: {t}, gain_error_max: 0.05),"),
        )
    };
    let e = Scenario::from_ron(&with("10.0"), Some("x.ron")).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("spec.gain_target"), "{e}");
    assert!(e.message.contains("-10"), "{e}");
    assert!(Scenario::from_ron(&with("-10.0"), Some("x.ron")).is_ok());
}

fn write(dir: &std::path::Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.display().to_string()
}

/// `check`: 0 when all pass, 1 when one fails, 2 on a bad file or bad
/// arguments, and 2 wins over 1.
#[test]
fn check_exit_codes() {
    let dir = temp_dir("check_codes");
    let base = std::fs::read_to_string("scenarios/line_driver_cable.ron").unwrap();
    let good = write(&dir, "good.ron", &base);
    let bad_spec = base.replace("pm_min_deg: 60.0", "pm_min_deg: 89.0");
    let failing = write(&dir, "failing.ron", &bad_spec);
    let broken = write(&dir, "broken.ron", "(title: ");
    let code = |args: &[&str]| {
        let o = bin().arg("check").args(args).output().unwrap();
        (
            o.status.code(),
            String::from_utf8_lossy(&o.stdout).into_owned(),
        )
    };
    let (c, out) = code(&[&good, "--trials", "50"]);
    assert_eq!((c, out.trim()), (Some(0), format!("PASS {good}").as_str()));
    let (c, out) = code(&[&good, &failing, "--trials", "50"]);
    assert_eq!(c, Some(1));
    assert!(
        out.contains(&format!("FAIL {failing}: pm_min_deg")) && out.contains("< 89"),
        "{out}"
    );
    assert_eq!(code(&[&failing, &broken, "--trials", "50"]).0, Some(2));
    assert_eq!(code(&["missing.ron"]).0, Some(2));
    assert_eq!(code(&[&good, "--trials", "0"]).0, Some(2));
    let (c, out) = code(&["scenarios/mic_preamp.ron"]);
    assert_eq!(
        (c, out.trim()),
        (Some(0), "PASS scenarios/mic_preamp.ron (no spec)")
    );
    // The scenario that fails its spec on yield.
    let (c, out) = code(&["scenarios/adc_driver_2n2.ron"]);
    assert_eq!(c, Some(1), "{out}");
    assert!(out.contains("yield"), "{out}");
}

/// `spread --json`: the keys, 20 bins holding every defined trial, yield
/// null without a spec.
#[test]
fn spread_json_keys() {
    let o = bin()
        .args(["spread", "assets/demo.ron", "--json", "--trials", "100"])
        .output()
        .unwrap();
    assert!(o.status.success() && o.stderr.is_empty());
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["trials"], 100);
    assert_eq!(v["dist"], "Uniform");
    assert!(v["yield"].is_null());
    let figures = v["figures"].as_array().unwrap();
    let keys = [
        "key",
        "nominal",
        "mean",
        "std",
        "min",
        "max",
        "p_low",
        "p_high",
        "corner_min",
        "corner_max",
        "corner_min_at",
        "corner_max_at",
        "undefined",
        "histogram",
        // Issue 29: each part's share of the figure's variance.
        "contributions",
    ];
    for f in figures {
        let obj = f.as_object().unwrap();
        assert_eq!(obj.len(), keys.len());
        for k in keys {
            assert!(obj.contains_key(k), "{k}");
        }
        let h: u64 = f["histogram"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| c.as_u64().unwrap())
            .sum();
        assert_eq!(f["histogram"].as_array().unwrap().len(), 20);
        assert_eq!(h + f["undefined"].as_u64().unwrap(), 100);
    }
    let te = figures.iter().find(|f| f["key"] == "target_error").unwrap();
    assert_eq!(te["corner_max_at"][0]["field"], "stage.rg");
}

#[test]
fn spread_without_threads_falls_back_to_one() {
    // A process limit can refuse every new thread (a spawn fails with
    // EAGAIN, POSIX pthread_create). The spread must then still run, on
    // the calling thread, and give the same result: each trial depends
    // only on the seed and its index (README "Spread and spec").
    let s = {
        let mut s = in_range(plain(Topology::NonInverting, 1.0e3, 10.0e3));
        s.stage.tolerance = 0.01;
        s
    };
    let opts = Run {
        trials: Some(200),
        ..Run::default()
    };
    let no_threads = rayon::ThreadPoolBuilder::new()
        .num_threads(2)
        .spawn_handler(|_| Err(std::io::Error::from(std::io::ErrorKind::WouldBlock)))
        .build();
    let alone = spread::spread_on(no_threads, &s, &opts);
    assert_eq!(alone, spread::spread(&s, &opts));
}
