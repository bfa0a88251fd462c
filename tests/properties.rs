//! Property tests over random valid scenarios: the analysis never panics
//! and never yields NaN or infinity where a number is defined.

use loopwright::engine::scenario::{Amp, Load, Scenario, Source, Stage};
use loopwright::engine::{analyze, Series, Topology};
use proptest::prelude::*;

fn log_range(lo: f64, hi: f64) -> impl Strategy<Value = f64> {
    (lo.ln()..hi.ln()).prop_map(f64::exp)
}

fn opt(s: impl Strategy<Value = f64>) -> impl Strategy<Value = Option<f64>> {
    prop_oneof![Just(None), s.prop_map(Some)]
}

prop_compose! {
    fn scenario()(
        topology in prop_oneof![Just(Topology::NonInverting), Just(Topology::Inverting), Just(Topology::Follower)],
        rg in log_range(0.01, 1e9),
        rf in log_range(0.01, 1e10),
        follower_rf in opt(log_range(1.0, 1e6)),
        cf in opt(log_range(0.1e-12, 1e-9)),
        riso in opt(log_range(1e-3, 1e6)),
        a0 in log_range(1.0, 1e10),
        gbw in log_range(1.0, 1e11),
        fp2 in opt(log_range(1e5, 1e9)),
        rin in opt(log_range(1.0, 1e15)),
        cin in opt(log_range(0.1e-12, 50e-12)),
        ro in log_range(1e-3, 1e5),
        vnoise in log_range(1e-10, 1e-7),
        vc in opt(log_range(0.1, 1e4)),
        inoise in log_range(1e-16, 1e-11),
        ic in opt(log_range(0.1, 1e4)),
        rs in prop_oneof![Just(0.0), log_range(1.0, 1e8)],
        load_r in opt(log_range(0.01, 1e10)),
        load_c in opt(log_range(1e-15, 1e-2)),
        temp_c in -55.0..150.0f64,
        band_lo in log_range(0.01, 1e3),
        band_decades in 0.5..6.0f64,
    ) -> Scenario {
        Scenario {
            version: 1,
            title: "random".into(),
            stage: Stage {
                topology,
                rg: (topology != Topology::Follower).then_some(rg),
                rf: if topology == Topology::Follower { follower_rf } else { Some(rf) },
                cf,
                riso,
                series: Series::E24,
                tolerance: 0.01,
            },
            amp: Amp { a0, gbw, fp2, rin, cin, ro, vnoise, vnoise_corner: vc, inoise, inoise_corner: ic },
            source: Source { r: rs },
            load: Load { r: load_r, c: load_c },
            temp_c,
            band: (band_lo, band_lo * 10f64.powf(band_decades)),
            notes: None,
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn analysis_is_finite(s in scenario()) {
        prop_assert!(s.validate().is_ok());
        let a = analyze(&s);
        for (name, v) in [
            ("ideal_gain", a.ideal_gain),
            ("dc_gain", a.dc_gain),
            ("gain_error", a.gain_error),
            ("peaking_db", a.peaking_db),
            ("zout_dc_ohm", a.zout_dc_ohm),
            ("noise_density_1khz", a.noise_density_1khz),
            ("noise_rms", a.noise_rms),
            ("loop_gain_dc", a.loop_gain_dc),
        ] {
            prop_assert!(v.is_finite(), "{} = {}", name, v);
        }
        for v in [a.f_3db_hz, a.crossover_hz, a.phase_margin_deg, a.gain_margin_db, a.zin_dc_ohm].into_iter().flatten() {
            prop_assert!(v.is_finite());
        }
        prop_assert!(a.zout_dc_ohm > 0.0, "Zout = {}", a.zout_dc_ohm);
        prop_assert!(a.peaking_db >= 0.0);
        for p in &a.sweep.points {
            prop_assert!(p.gain.re.is_finite() && p.gain.im.is_finite());
            prop_assert!(p.loop_gain.re.is_finite() && p.loop_gain.im.is_finite());
            prop_assert!(p.zout.norm().is_finite() && p.zout.norm() > 0.0, "Zout at {} Hz", p.f_hz);
            prop_assert!(p.noise_density().is_finite());
        }
        let total: f64 = a.noise_sources.iter().map(|n| n.share).sum();
        prop_assert!(total == 0.0 || (total - 1.0).abs() < 1e-9);
    }

    #[test]
    fn saving_round_trips(s in scenario()) {
        let back = Scenario::from_ron(&s.to_ron(), None).unwrap();
        prop_assert_eq!(s, back);
    }
}
