//! Shared helpers for the integration tests.
#![allow(dead_code)]

pub mod tmux;

use loopwright::engine::scenario::{Amp, Load, Scenario, Source, Stage};
use loopwright::engine::{Series, Topology};

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
            ..Amp::default()
        },
        source: Source {
            r: 0.0,
            dc: None,
            peak: None,
        },
        load: Load { r: None, c: None },
        supply: None,
        step: None,
        temp_c: 25.0,
        band: (10.0, 100.0e3),
        spread: None,
        spec: None,
        notes: None,
    }
}

/// A follower with a wire from output to inverting input.
/// The same stage with ro raised to 10 mΩ, inside the accepted range and a
/// decade above its end, so the rules see a valid, unremarkable stage.
pub fn in_range(mut s: Scenario) -> Scenario {
    s.amp.ro = 0.01;
    s
}

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
    // Shown with --nocapture: the real error, to keep tolerances honest.
    println!("{what}: rel err {:e} (tol {tol:e})", rel(got, want));
    assert!(
        rel(got, want) <= tol,
        "{what}: got {got:e}, want {want:e} (rel err {:e} > {tol:e})",
        rel(got, want)
    );
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

/// Run the binary; its stdout as text (it must succeed).
pub fn stdout_of(args: &[&str]) -> String {
    let out = bin().args(args).output().unwrap();
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
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

/// The warnings of a scenario. Every test gets them through here, so a
/// change in how the engine hands them out touches one place.
pub fn warnings_of(s: &Scenario) -> Vec<loopwright::engine::Warning> {
    loopwright::engine::evaluate(s).warnings
}

/// The warning with `code`, if the scenario raises it.
pub fn warning(s: &Scenario, code: &str) -> Option<loopwright::engine::Warning> {
    warnings_of(s).into_iter().find(|w| w.code == code)
}

/// |transfer| from one noise source (by key) to the output at f: its output
/// density over its own density. The source's density must not be zero.
pub fn noise_transfer(c: &loopwright::engine::Circuit, key: &str, f: f64) -> f64 {
    let k = c
        .net
        .noise
        .iter()
        .position(|n| n.key == key)
        .unwrap_or_else(|| panic!("no noise source {key}"));
    let p = c.eval(f).unwrap();
    (p.noise_psd[k] / c.net.noise[k].density(f)).sqrt()
}

/// An amplifier close enough to ideal for closed forms derived with an
/// ideal op-amp: a0 = 1e9, gbw = 1e12 Hz (open-loop pole at 1 kHz, so
/// |A| > 1e5 up to 10 MHz), ro = 1 µΩ.
pub fn fast(mut s: Scenario) -> Scenario {
    s.amp.a0 = 1e9;
    s.amp.gbw = 1e12;
    s
}

/// Johnson–Nyquist density of r at temp_c, V/√Hz: √(4kTR), k from SI 2019.
pub fn johnson(r: f64, temp_c: f64) -> f64 {
    (4.0 * 1.380649e-23 * (temp_c + 273.15) * r).sqrt()
}

/// The frequency in [lo, hi] where a falling magnitude `mag` crosses 1, by
/// bisection on log f (for closed-form loop gains in the tests).
pub fn unity_crossing(lo: f64, hi: f64, mag: impl Fn(f64) -> f64) -> f64 {
    let (mut lo, mut hi) = (lo, hi);
    for _ in 0..200 {
        let mid = (lo * hi).sqrt();
        if mag(mid) > 1.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    (lo * hi).sqrt()
}

/// The model's open-loop gain A(jf) = a0/((1 + jf/fp1)(1 + jf/fp2)),
/// fp1 = gbw/a0 (the single- or two-pole model of the design notes).
pub fn open_loop(s: &Scenario, f: f64) -> num_complex::Complex64 {
    let one = num_complex::Complex64::new(1.0, 0.0);
    let j = num_complex::Complex64::new(0.0, 1.0);
    let mut d = one + j * f / (s.amp.gbw / s.amp.a0);
    if let Some(fp2) = s.amp.fp2 {
        d *= one + j * f / fp2;
    }
    s.amp.a0 / d
}

/// Phase margin of a closed-form loop gain t(f): 180° + arg T at |T| = 1,
/// with arg T continued from DC by small steps (so no wrap is missed).
/// Returns (crossover Hz, margin degrees).
pub fn closed_form_margin(t: impl Fn(f64) -> num_complex::Complex64) -> (f64, f64) {
    let fc = unity_crossing(1e-3, 1e12, |f| t(f).norm());
    let mut phase = 0.0f64;
    let mut f = 1e-3;
    while f < fc {
        let p = t(f).arg().to_degrees();
        phase = p + 360.0 * ((phase - p) / 360.0).round();
        f *= 1.01;
    }
    let p = t(fc).arg().to_degrees();
    phase = p + 360.0 * ((phase - p) / 360.0).round();
    (fc, 180.0 + phase)
}

/// A plain key press.
pub fn key(c: crossterm::event::KeyCode) -> crossterm::event::KeyEvent {
    crossterm::event::KeyEvent::new(c, crossterm::event::KeyModifiers::NONE)
}

/// Type text into the workbench, one key per character.
pub fn type_text(a: &mut loopwright::ui::app::App, text: &str) {
    for c in text.chars() {
        a.on_key(key(crossterm::event::KeyCode::Char(c)));
    }
}

/// Press one key n times.
pub fn press(a: &mut loopwright::ui::app::App, c: crossterm::event::KeyCode, n: usize) {
    for _ in 0..n {
        a.on_key(key(c));
    }
}

/// The workbench drawn into a w×h TestBackend, as text.
pub fn screen_at(app: &loopwright::ui::app::App, w: u16, h: u16) -> String {
    let mut t = ratatui::Terminal::new(ratatui::backend::TestBackend::new(w, h)).unwrap();
    t.draw(|f| loopwright::ui::view::draw(f, app)).unwrap();
    loopwright::ui::view::buffer_text(t.backend().buffer()).join("\n")
}
