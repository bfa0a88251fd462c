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

criterion_group!(benches, full_analysis, one_point);
criterion_main!(benches);
