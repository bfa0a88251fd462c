//! The loop view of every kind (issue 21): the loop gain T with the
//! amplifier's open-loop gain |A(f)| and the noise gain |1/β(f)| = |A/T|,
//! in the SVG figure (`plot --view loop`) and the workbench, each checked
//! against its closed form.
//!
//! Closed forms (the feedback factor of a resistive divider, textbook
//! formula): around a near-ideal output (ro 10 mΩ against kilohms), with
//! an ideal source and no rin or cin, β is the share of the output the
//! network returns to the − input: 1/β = 1 + rf/rg for the non-inverting
//! and the inverting stage (the inverting input's source EMF is 0 V, so rg
//! returns to ground), 1 + r2/r1 for the difference amplifier, 1 for the
//! follower, and for the transimpedance stage 1 + Z_f·Y_d with Z_f =
//! rf/(1 + s·rf·cf) and Y_d = 1/rsh + s·cd (the diode's parts to AC
//! ground). A(f) = a0/(1 + jf·a0/gbw), the single-pole model.

use crate::support::closed_forms::{assert_rel, open_loop};
use crate::support::keys::{key, screen_at};
use crossterm::event::KeyCode;
use loopwright::judge::evaluate;
use loopwright::model::Scenario;
use loopwright::output::figure::Curve;
use loopwright::output::svg::{self, Evaluated, Look};
use loopwright::output::traces::Traces;
use loopwright::output::views::ViewId;
use loopwright::ui::app::App;
use loopwright::ui::theme::Theme;
use num_complex::Complex64 as C64;
use std::f64::consts::PI;

const AMP: &str = "amp: (a0: 1.0e5, gbw: 1.0e6, ro: 0.01, vnoise: 1.0e-9, inoise: 0.0)";

/// A closed form of f.
type Form = Box<dyn Fn(f64) -> C64>;

/// One stage of each kind, as a file gives it, and its 1/β(f).
fn stages() -> Vec<(Scenario, Form)> {
    let one = C64::new(1.0, 0.0);
    let kinds: [(&str, &str, Form); 5] = [
        (
            "NonInverting, rg: 1000.0, rf: 9000.0",
            "r: 0.0",
            Box::new(move |_| one * 10.0),
        ),
        (
            "Inverting, rg: 1000.0, rf: 9000.0",
            "r: 0.0",
            Box::new(move |_| one * 10.0),
        ),
        ("Follower", "r: 0.0", Box::new(move |_| one)),
        (
            "Difference, r1: 1000.0, r2: 4000.0, r3: 1000.0, r4: 4000.0",
            "r: 0.0",
            Box::new(move |_| one * 5.0),
        ),
        (
            "Transimpedance, rf: 1.0e6, cf: 1.0e-12",
            "cd: 20.0e-12, rsh: 1.0e7",
            Box::new(move |f| {
                let s = C64::new(0.0, 2.0 * PI * f);
                let zf = 1.0e6 / (1.0 + s * 1.0e6 * 1.0e-12);
                1.0 + zf * (1.0 / 1.0e7 + s * 20.0e-12)
            }),
        ),
    ];
    kinds
        .into_iter()
        .map(|(stage, source, nb)| {
            let text = format!(
                "(title: \"loop view\", stage: (topology: {stage}, series: E24, \
                 tolerance: 0.01), {AMP}, source: ({source}), load: (), temp_c: 25.0, \
                 band: (10.0, 1.0e5))"
            );
            (Scenario::from_ron(&text, None).unwrap(), nb)
        })
        .collect()
}

/// The loop view's curve whose name holds `part`.
fn named<'a>(curves: &'a [Curve], part: &str) -> &'a Curve {
    curves
        .iter()
        .find(|c| c.name.contains(part))
        .unwrap_or_else(|| panic!("no curve “{part}” in the loop view"))
}

#[test]
fn the_loop_view_draws_the_open_loop_and_the_noise_gain_for_every_kind() {
    for (s, noise_gain) in stages() {
        let e = evaluate(&s);
        let curves = (ViewId::Loop.view().curves)(&Traces::new(&e.analysis));
        let a = named(&curves, "|A|");
        let nb = named(&curves, "|1/β|");
        let t = named(&curves, "|T|");
        assert!(a.points.len() > 100 && nb.points.len() > 100);
        // Up to a decade past the crossover, where |T| still carries
        // several digits of the noise gain.
        let fc = e.analysis.crossover_hz.unwrap();
        for p in a.points.iter().filter(|p| 10f64.powf(p.0) < 10.0 * fc) {
            let f = 10f64.powf(p.0);
            let want = 20.0 * open_loop(&s, f).norm().log10();
            assert!(
                (p.1 - want).abs() < 1e-6,
                "{} |A| at {f} Hz",
                s.stage.topology.name()
            );
        }
        for p in nb.points.iter().filter(|p| 10f64.powf(p.0) < 10.0 * fc) {
            let f = 10f64.powf(p.0);
            let got = 10f64.powf(p.1 / 20.0);
            let what = format!("{} |1/β| at {f} Hz", s.stage.topology.name());
            assert_rel(&what, got, noise_gain(f).norm(), 1e-5);
        }
        // They meet where the loop gain crosses 0 dB: T is their gap.
        for ((x, ta), (na, nbv)) in t.points.iter().zip(a.points.iter().zip(&nb.points)) {
            assert_eq!(*x, na.0);
            assert!((ta - (na.1 - nbv.1)).abs() < 1e-6);
        }
    }
}

#[test]
fn the_svg_and_the_workbench_label_the_two_traces() {
    for (s, _) in stages() {
        let e = evaluate(&s);
        let stage = [Evaluated {
            scenario: &s,
            eval: &e,
        }];
        let text = svg::render(ViewId::Loop.view(), &stage, Look::default()).unwrap();
        assert!(text.contains("open-loop gain |A|"), "{text}");
        assert!(text.contains("noise gain |1/β| = |A/T|"));
        let mut app = App::new(vec![(s.clone(), None)], Theme::new(false, false));
        while app.view != ViewId::Loop {
            app.on_key(key(KeyCode::Char('v')));
        }
        let screen = screen_at(&app, 120, 40);
        assert!(screen.contains("open loop"), "{screen}");
        assert!(screen.contains("noise gain"), "{screen}");
    }
}
