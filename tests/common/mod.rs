//! Shared helpers for the integration tests.
#![allow(dead_code)]

pub mod tmux;

use loopwright::engine::scenario::{Amp, Load, Scenario, Source, Stage};
use loopwright::engine::{Series, Topology};

/// A plain non-inverting stage around a single-pole op-amp with no input
/// capacitance, no rin, a near-zero ro (1 µΩ), no load and an ideal source. Tests change
/// the fields they need. (Values chosen for the checks; not from a part.)
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
            series: Series::E24,
            tolerance: 0.01,
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
        },
        source: Source { r: 0.0 },
        load: Load { r: None, c: None },
        temp_c: 25.0,
        band: (10.0, 100.0e3),
        notes: None,
    }
}

/// A follower with a wire from output to inverting input.
pub fn follower() -> Scenario {
    let mut s = plain(Topology::Follower, 1.0, 0.0);
    s.stage.rg = None;
    s.stage.rf = None;
    s
}

pub fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

#[track_caller]
pub fn assert_rel(what: &str, got: f64, want: f64, tol: f64) {
    assert!(
        rel(got, want) <= tol,
        "{what}: got {got:e}, want {want:e} (rel err {:e} > {tol:e})",
        rel(got, want)
    );
}

pub fn bin() -> std::process::Command {
    std::process::Command::new(env!("CARGO_BIN_EXE_loopwright"))
}

/// A fresh, empty folder for one test (named after it and the process).
pub fn temp_dir(name: &str) -> std::path::PathBuf {
    let d = std::env::temp_dir().join(format!("lw-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}
