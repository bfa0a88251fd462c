//! The plot widget drawn into ratatui's TestBackend: A and B merged per
//! cell, labels and grid lines never in a trace cell.

use loopwright::ui::plot::{Joining, LogPlot, Stroke, Trace, VMark};
use ratatui::backend::TestBackend;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::symbols::Marker;
use ratatui::Terminal;

const W: u16 = 40;
const H: u16 = 10;

/// A gently falling line and a rising one that cross mid-plot: made-up
/// data on a 0..9 decade axis, 0..100 units high.
fn falling() -> Vec<(f64, f64)> {
    (0..=90)
        .map(|i| (i as f64 / 10.0, 90.0 - i as f64))
        .collect()
}

fn rising() -> Vec<(f64, f64)> {
    (0..=90)
        .map(|i| (i as f64 / 10.0, 5.0 + i as f64))
        .collect()
}

fn trace<'a>(points: &'a [(f64, f64)], stroke: Stroke, label: Option<&str>, at: f64) -> Trace<'a> {
    Trace {
        points,
        style: Style::default(),
        stroke,
        label: label.map(str::to_string),
        label_at: at,
        minor: false,
        joining: Joining::Continuous,
    }
}

/// A solid and B dotted, without names.
fn two<'a>(a: &'a [(f64, f64)], b: &'a [(f64, f64)]) -> Vec<Trace<'a>> {
    vec![
        trace(a, Stroke::Solid, None, 0.0),
        trace(b, Stroke::Dotted, None, 0.0),
    ]
}

fn plot(traces: Vec<Trace<'_>>, marks: Vec<VMark>, grid: bool) -> LogPlot<'_> {
    LogPlot {
        traces,
        x_range: (0.0, 9.0),
        y_range: (0.0, 100.0),
        y_ticks: vec![
            (0.0, "0".into()),
            (50.0, "50".into()),
            (100.0, "100".into()),
        ],
        marks,
        markers: (Marker::Braille, Marker::Dot),
        label_style: Style::default(),
        mark_style: Style::default(),
        rule: "│",
        tick: "├",
        x_labels: true,
        x_ticks: None,
        grid: grid.then_some(('·', '┊')),
        cursor: None,
    }
}

fn draw(p: &LogPlot<'_>) -> Buffer {
    let mut t = Terminal::new(TestBackend::new(W, H)).unwrap();
    t.draw(|f| f.render_widget(p, Rect::new(0, 0, W, H)))
        .unwrap();
    t.backend().buffer().clone()
}

/// The braille dots of a cell (0 for any other symbol).
fn dots(buf: &Buffer, x: u16, y: u16) -> u32 {
    let c = buf[(x, y)].symbol().chars().next().unwrap_or(' ') as u32;
    if (0x2801..=0x28ff).contains(&c) {
        c - 0x2800
    } else {
        0
    }
}

/// Every cell holding trace dots in `bare` holds the same in `full`.
fn trace_cells_kept(bare: &Buffer, full: &Buffer) -> Vec<String> {
    let mut lost = Vec::new();
    for y in 0..H {
        for x in 0..W {
            if dots(bare, x, y) != 0 && bare[(x, y)].symbol() != full[(x, y)].symbol() {
                lost.push(format!(
                    "({x},{y}) {} → {}",
                    bare[(x, y)].symbol(),
                    full[(x, y)].symbol()
                ));
            }
        }
    }
    lost
}

fn text(buf: &Buffer) -> String {
    crate::support::screen::buffer_text(buf).join("\n")
}

#[test]
fn identical_a_and_b_keep_every_dot_of_a() {
    let pts = falling();
    let a_only = draw(&plot(
        vec![trace(&pts, Stroke::Solid, None, 0.0)],
        vec![],
        false,
    ));
    let both = draw(&plot(two(&pts, &pts), vec![], false));
    let mut cells = 0;
    for y in 0..H {
        for x in 0..W {
            let a = dots(&a_only, x, y);
            if a != 0 {
                cells += 1;
                let ab = dots(&both, x, y);
                assert_eq!(ab & a, a, "({x},{y}) A's dots wiped\n{}", text(&both));
            }
        }
    }
    assert!(cells > 20, "{}", text(&a_only));
}

#[test]
fn b_alone_is_drawn_with_fewer_dots_than_a() {
    // Dotted is more than a colour: the same line has about half the dots.
    let pts = falling();
    let count = |stroke| {
        let b = draw(&plot(vec![trace(&pts, stroke, None, 0.0)], vec![], false));
        let mut n = 0;
        for y in 0..H {
            for x in 0..W {
                n += dots(&b, x, y).count_ones();
            }
        }
        n
    };
    let (solid, dotted) = (count(Stroke::Solid), count(Stroke::Dotted));
    assert!(dotted > 0 && dotted * 3 < solid * 2, "{solid} vs {dotted}");
}

#[test]
fn labels_never_replace_a_trace_cell() {
    let (f, r) = (falling(), rising());
    let bare = draw(&plot(two(&f, &r), vec![], false));
    // Names asked for where the traces cross, marks whose labels' first
    // choice (row 0 and 1 at the mark) lies on the falling trace.
    let marks = vec![
        VMark {
            x: 0.5,
            label: "-3dB".into(),
        },
        VMark {
            x: 1.0,
            label: "margin 60° @ 10 Hz".into(),
        },
    ];
    let full = draw(&plot(
        vec![
            trace(&f, Stroke::Solid, Some("Zout"), 0.45),
            trace(&r, Stroke::Dotted, Some("Zin"), 0.45),
        ],
        marks,
        false,
    ));
    let t = text(&full);
    for name in ["Zout", "Zin", "-3dB", "margin 60° @ 10 Hz"] {
        assert!(t.contains(name), "{name} missing\n{t}");
    }
    let lost = trace_cells_kept(&bare, &full);
    assert!(lost.is_empty(), "{lost:?}\n{t}\n{}", text(&bare));
}

#[test]
fn grid_lines_lie_under_the_traces() {
    let (f, r) = (falling(), rising());
    let bare = draw(&plot(two(&f, &r), vec![], false));
    let gridded = draw(&plot(two(&f, &r), vec![], true));
    let t = text(&gridded);
    assert!(t.contains('┊') && t.contains('·'), "{t}");
    let lost = trace_cells_kept(&bare, &gridded);
    assert!(lost.is_empty(), "{lost:?}\n{t}");
}
