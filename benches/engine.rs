//! Engine speed: the whole analysis of the demo scenario, as run on every
//! key press in the workbench.

use criterion::{criterion_group, criterion_main, Criterion};
use loopwright::engine::{analyze, scenario};
use std::hint::black_box;

fn full_analysis(c: &mut Criterion) {
    let s = scenario::demo();
    c.bench_function("full_analysis", |b| b.iter(|| analyze(black_box(&s))));
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

criterion_group!(benches, full_analysis, one_point, frame);
criterion_main!(benches);
