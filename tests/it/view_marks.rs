//! The marks a stage gets in each view (f−3dB, crossover and margin, band
//! edges, limits), read off what is drawn: the workbench's plot panel and
//! the SVG figure of the same view.

use crate::support::closed_forms::{closed_form_margin, open_loop};
use crate::support::keys::{key, screen_at};
use crate::support::stages::follower;
use crossterm::event::KeyCode;
use loopwright::judge::evaluate;
use loopwright::model::Scenario;
use loopwright::output::svg::{self, Evaluated, Look};
use loopwright::output::views::{MarkKind, ViewId};
use loopwright::ui::app::App;
use loopwright::ui::theme::Theme;
use std::collections::BTreeSet;

/// A follower (β = 1) with three poles in its loop: gbw/a0 = 1 Hz,
/// fp2 = 10 kHz and ro·load c = 1/(2π·100 Ω·1 µF) ≈ 1.6 kHz. Each lags
/// nearly 90° well above its corner, so where |T| = 1 the loop lags past
/// 180°: a negative phase margin (textbook three-pole loop).
fn three_pole_follower() -> Scenario {
    let mut s = follower();
    s.title = "three poles in the loop".into();
    s.amp.a0 = 1e6;
    s.amp.gbw = 1e6;
    s.amp.fp2 = Some(1e4);
    s.amp.ro = 100.0;
    s.amp.vnoise = 1e-9;
    s.load.c = Some(1e-6);
    s
}

/// The plot panel (upper right) of the workbench in `view`, inside its
/// borders: the rows between the panel's top and bottom border, right of
/// the parameter pane.
fn plot_panel(s: &Scenario, view: ViewId) -> Vec<String> {
    let mut a = App::new(vec![(s.clone(), None)], Theme::new(false, false));
    for _ in 0..ViewId::ALL.len() {
        if a.view == view {
            break;
        }
        a.on_key(key(KeyCode::Char('v')));
    }
    assert_eq!(a.view, view);
    let screen = screen_at(&a, 160, 48);
    // At 160 columns the parameter pane is 38 wide.
    let right: Vec<String> = screen
        .lines()
        .map(|l| l.chars().skip(38).collect())
        .collect();
    right
        .into_iter()
        .skip_while(|l| !l.starts_with('╭'))
        .skip(1)
        .take_while(|l| !l.starts_with('╰'))
        .collect()
}

fn words(text: &str) -> BTreeSet<&str> {
    text.split(|c: char| !c.is_alphanumeric() && c != '-' && c != '!')
        .collect()
}

/// What the workbench's plot marks, by its labels (-3dB, fc, band, !).
fn workbench_marks(s: &Scenario, view: ViewId) -> BTreeSet<MarkKind> {
    let panel = plot_panel(s, view).join("\n");
    let w = words(&panel);
    let mut kinds = BTreeSet::new();
    if panel.contains("-3dB") {
        kinds.insert(MarkKind::F3db);
    }
    if w.contains("fc") {
        kinds.insert(MarkKind::Crossover);
    }
    if w.contains("band") {
        kinds.insert(MarkKind::Band);
    }
    if panel.contains('!') {
        kinds.insert(MarkKind::Limit);
    }
    kinds
}

/// What the SVG figure marks, by its mark texts; None where the view
/// cannot draw the stage.
fn svg_marks(s: &Scenario, view: ViewId) -> Option<BTreeSet<MarkKind>> {
    let e = evaluate(s);
    let stage = [Evaluated {
        scenario: s,
        eval: &e,
    }];
    if (view.view().needs)(&stage[0]).is_some() {
        return None;
    }
    let text = svg::render(view.view(), &stage, Look::default()).unwrap();
    let mut kinds = BTreeSet::new();
    for line in text.lines().map(str::trim) {
        if line.starts_with("f−3dB ") {
            kinds.insert(MarkKind::F3db);
        } else if line.starts_with("margin ") || line.starts_with("crossover ") {
            kinds.insert(MarkKind::Crossover);
        } else if line.starts_with("band ") {
            kinds.insert(MarkKind::Band);
        } else if line.starts_with("passes the ") {
            kinds.insert(MarkKind::Limit);
        }
    }
    Some(kinds)
}

#[test]
fn unstable_stage_has_no_minus_3db_mark_on_the_workbench() {
    let s = three_pole_follower();
    // The loop in closed form: the op-amp's two poles, then the pole of
    // ro with the load capacitance (the follower feeds all of it back).
    let fp3 = 1.0 / (2.0 * std::f64::consts::PI * 100.0 * 1e-6);
    let one = num_complex::Complex64::new(1.0, 0.0);
    let j = num_complex::Complex64::new(0.0, 1.0);
    let (_, pm) = closed_form_margin(|f| open_loop(&s, f) / (one + j * f / fp3));
    assert!(pm < 0.0, "closed-form margin {pm}°");
    // An oscillating stage has no closed-loop bandwidth to mark.
    let panel = plot_panel(&s, ViewId::Response).join("\n");
    assert!(!panel.contains("-3dB"), "{panel}");
    // The loop view still marks the crossover.
    assert!(words(&plot_panel(&s, ViewId::Loop).join("\n")).contains("fc"));
}

#[test]
fn workbench_and_svg_mark_the_same_things_for_every_stage() {
    let mut stages = vec![loopwright::files::load::demo(), three_pole_follower()];
    let mut files: Vec<_> = std::fs::read_dir("scenarios")
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "ron"))
        .collect();
    files.sort();
    assert!(files.len() >= 8, "{files:?}");
    stages.extend(files.iter().map(|p| Scenario::load(p).unwrap()));
    let views = [
        ViewId::Response,
        ViewId::Loop,
        ViewId::Noise,
        ViewId::Envelope,
    ];
    let mut compared = 0;
    for s in &stages {
        for view in views {
            let Some(figure) = svg_marks(s, view) else {
                continue;
            };
            let bench = workbench_marks(s, view);
            assert_eq!(bench, figure, "{} in the {:?} view", s.title, view);
            compared += 1;
        }
    }
    assert!(compared >= 30, "{compared}");
}

/// An unstable stage has no −3 dB mark anywhere: not on the workbench,
/// not in the SVG of the same view, and `f_3db_hz` reads null in JSON
/// (an oscillating stage has no closed-loop bandwidth).
#[test]
fn unstable_stage_has_no_minus_3db_mark_in_the_svg_or_json() {
    let s = three_pole_follower();
    let e = evaluate(&s);
    assert!(e.analysis.unstable());
    let svg = svg_marks(&s, ViewId::Response).expect("the response view draws it");
    assert!(!svg.contains(&MarkKind::F3db), "{svg:?}");
    assert!(!workbench_marks(&s, ViewId::Response).contains(&MarkKind::F3db));
    let rep = loopwright::output::report::Report::new(&s, &e, &[]);
    let mut json = Vec::new();
    rep.write_json(&mut json).unwrap();
    let v: serde_json::Value = serde_json::from_slice(&json).unwrap();
    assert!(v["f_3db_hz"].is_null(), "{}", v["f_3db_hz"]);
}
