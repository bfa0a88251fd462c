//! The test stages: scenarios built in code for the closed-form checks,
//! and one as RON text for the commands.

use loopwright::model::scenario::{Amp, Feedback, Load, Scenario, Source, Stage};
use loopwright::model::Series;
use loopwright::model::Topology;

/// A plain non-inverting stage around a single-pole op-amp with no input
/// capacitance, no rin, a near-zero ro (1 µΩ, below the accepted range on
/// purpose: a near-ideal output for the closed-form checks, which ignore
/// ro; `evaluate` still solves it and adds an input-invalid warning — use
/// [`in_range`] where warnings matter), no load and an ideal source. Tests
/// change the fields they need. (Values chosen for the checks; not from a part.)
pub fn plain(topology: Topology, rg: f64, rf: f64) -> Scenario {
    Scenario {
        version: 1,
        title: "test stage".into(),
        stage: Stage {
            topology,
            rg: Some(rg),
            rf: Some(rf),
            cf: None,
            riso: None,
            r1: None,
            r2: None,
            r3: None,
            r4: None,
            c4: None,
            feedback: Feedback::Pin,
            series: Series::E24,
            tolerance: 0.01,
            part_tolerance: Default::default(),
            tc_ppm: None,
        },
        amp: Amp {
            a0: 1.0e5,
            gbw: 1.0e6,
            fp2: None,
            rin: None,
            cin: None,
            ro: 1e-6,
            vnoise: 0.0,
            vnoise_corner: None,
            inoise: 0.0,
            inoise_corner: None,
            ..Amp::default()
        },
        source: Source {
            r: Some(0.0),
            ..Source::default()
        },
        load: Load {
            r: None,
            c: None,
            sample: None,
        },
        supply: None,
        reference: None,
        step: None,
        temp_c: 25.0,
        temp_range: None,
        band: (10.0, 100.0e3),
        spread: None,
        spec: None,
        notes: None,
    }
}

/// The same stage with ro raised to 10 mΩ, inside the accepted range and a
/// decade above its end, so the rules see a valid, unremarkable stage.
pub fn in_range(mut s: Scenario) -> Scenario {
    s.amp.ro = 0.01;
    s
}

/// A follower with a wire from output to inverting input.
pub fn follower() -> Scenario {
    let mut s = plain(Topology::Follower, 1.0, 0.0);
    s.stage.rg = None;
    s.stage.rf = None;
    s
}

/// An amplifier close enough to ideal for closed forms derived with an
/// ideal op-amp: a0 = 1e9, gbw = 1e12 Hz (open-loop pole at 1 kHz, so
/// |A| > 1e5 up to 10 MHz), ro = 1 µΩ.
pub fn fast(mut s: Scenario) -> Scenario {
    s.amp.a0 = 1e9;
    s.amp.gbw = 1e12;
    s
}

/// A non-inverting stage (rg 1 k, rf 9 k) around a fast single-pole
/// model (a0 1e8, gbw 1e11: open-loop pole at 1 kHz), ro 10 Ω, ideal
/// source, no load, no rin: the stage of the closed-form point checks.
pub const CLOSED_FORM_RON: &str = r#"(
    title: "closed forms",
    stage: (topology: NonInverting, rg: 1000.0, rf: 9000.0, series: E24, tolerance: 0.01),
    amp: (a0: 1.0e8, gbw: 1.0e11, ro: 10.0, vnoise: 3.0e-9, inoise: 0.0),
    source: (r: 0.0),
    load: (),
    temp_c: 25.0,
    band: (10.0, 100000.0),
)"#;
