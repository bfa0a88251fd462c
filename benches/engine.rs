//! Engine speed: the whole analysis of the demo scenario, as run on every
//! key press in the workbench.

use criterion::{criterion_group, criterion_main, Criterion};
use loopwright::engine::analyze;
use loopwright::files::load as scenario;
use std::hint::black_box;

fn full_analysis(c: &mut Criterion) {
    let s = scenario::demo();
    c.bench_function("full_analysis", |b| b.iter(|| analyze(black_box(&s))));
}

/// The demo with every signal-limit field filled in (the example
/// values): the limits step adds one DC factorisation and the band maxima.
fn full_analysis_with_limits(c: &mut Criterion) {
    let mut s = scenario::demo();
    let a = &mut s.amp;
    (a.vos, a.vos_drift, a.ib, a.ios) = (Some(1.0e-3), Some(5.0e-6), Some(80.0e-9), Some(10.0e-9));
    (a.slew, a.iout) = (Some(0.5e6), Some(20.0e-3));
    (a.swing_neg, a.swing_pos, a.cm_neg, a.cm_pos) = (Some(1.5), Some(1.5), Some(2.0), Some(2.0));
    (s.source.dc, s.source.peak) = (Some(0.5), Some(0.5));
    s.supply = Some(loopwright::model::scenario::Supply {
        neg: -15.0,
        pos: 15.0,
    });
    assert!(s.validate().is_ok());
    c.bench_function("full_analysis_with_limits", |b| {
        b.iter(|| analyze(black_box(&s)))
    });
}

fn one_point(c: &mut Criterion) {
    let s = scenario::demo();
    let circuit = loopwright::engine::Circuit::new(&s);
    c.bench_function("one_point", |b| {
        b.iter(|| circuit.eval(black_box(12_345.0)))
    });
}

/// One full frame of the demo at 120×40 after a parameter step: the engine
/// re-runs and every pane is drawn into a TestBackend.
fn frame(c: &mut Criterion) {
    use crossterm::event::{KeyCode, KeyEvent, KeyModifiers};
    use loopwright::ui::{app::App, theme::Theme, view};
    use ratatui::{backend::TestBackend, Terminal};
    let mut app = App::new(vec![(scenario::demo(), None)], Theme::new(true, false));
    let mut term = Terminal::new(TestBackend::new(120, 40)).unwrap();
    let mut up = true;
    c.bench_function("frame", |b| {
        b.iter(|| {
            let code = if up { KeyCode::Right } else { KeyCode::Left };
            up = !up;
            app.on_key(KeyEvent::new(code, KeyModifiers::NONE));
            term.draw(|f| view::draw(f, &app)).unwrap();
        })
    });
}

/// The step response alone, on the demo (linear) and on the demo with a
/// 10 V step and a 1 V/µs slew limit (slewing, then linear).
fn step_response(c: &mut Criterion) {
    use loopwright::engine::analysis::Circuit;
    use loopwright::engine::step;
    let linear = scenario::demo();
    let mut slewing = linear.clone();
    slewing.amp.slew = Some(1.0e6);
    slewing.step = Some(loopwright::model::scenario::Step {
        size: Some(10.0),
        size_a: None,
    });
    for (name, s) in [
        ("step_response", &linear),
        ("step_response_slewing", &slewing),
    ] {
        let a = analyze(s);
        let f_ref = a.crossover_hz.unwrap_or(s.amp.gbw);
        let circuit = Circuit::new(s);
        c.bench_function(name, |b| {
            b.iter(|| step::step_response(black_box(s), &circuit.net, f_ref, false))
        });
    }
}

/// 10 000 Monte Carlo trials of the demo (its resistors vary, 4 corners),
/// in parallel on every core; and one trial's analysis alone.
fn spread_10k(c: &mut Criterion) {
    use loopwright::engine::analysis::{analyze_to, TRIAL};
    use loopwright::study::spread::{spread, Run};
    let s = scenario::demo();
    let mut g = c.benchmark_group("spread");
    g.sample_size(10);
    g.bench_function("spread_10k", |b| {
        b.iter(|| {
            spread(
                black_box(&s),
                &Run {
                    trials: Some(10_000),
                    ..Run::default()
                },
            )
        })
    });
    g.finish();
    c.bench_function("spread_trial", |b| {
        b.iter(|| analyze_to(black_box(&s), TRIAL))
    });
}

criterion_group!(
    benches,
    spread_10k,
    full_analysis,
    full_analysis_with_limits,
    step_response,
    one_point,
    frame
);
criterion_main!(benches);
