//! The workbench's spread view: computed in the background, histograms
//! with the spec limits and the yield, results dropped when the stage
//! changes; the `spec` warning in the strip.

use crate::support::keys::{key, screen_at};
use crossterm::event::KeyCode;
use loopwright::judge::evaluate;
use loopwright::model::scenario::Scenario;
use loopwright::study::spread;
use loopwright::ui::app::{App, ViewId};
use loopwright::ui::theme::Theme;

fn example(name: &str) -> Scenario {
    Scenario::load(std::path::Path::new(&format!("scenarios/{name}.ron"))).unwrap()
}

/// Let the spread view's background job finish, as the event loop would:
/// tick until no job runs.
fn finish_spread(a: &mut App) {
    a.tick();
    while a.spread.running() {
        std::thread::sleep(std::time::Duration::from_millis(5));
        a.tick();
    }
}

/// The app on the spread view with the background job finished.
fn on_spread_view(s: Scenario) -> App {
    let mut a = App::new(vec![(s, None)], Theme::new(false, false));
    while a.view != ViewId::Spread {
        a.on_key(key(KeyCode::Char('v')));
    }
    finish_spread(&mut a);
    a
}

#[test]
fn spread_view_shows_histograms_limits_and_yield_at_80x24() {
    let mut s = example("adc_driver_2n2");
    s.spread.as_mut().unwrap().trials = Some(300);
    let a = on_spread_view(s.clone());
    let screen = screen_at(&a, 80, 24);
    for want in [
        "gain error",
        "f−3dB",
        "margin",
        "yield",
        "needs ≥ 99 %",
        "≥60°",
    ] {
        assert!(screen.contains(want), "{want}\n{screen}");
    }
    // The yield shown is the engine's for the same stage and trials.
    let r = spread::spread(&s, &spread::Run::default());
    let y = format!(
        "yield {} %",
        loopwright::model::values::fmt_plain(100.0 * r.yield_frac.unwrap(), 4)
    );
    assert!(screen.contains(&y), "{y}\n{screen}");
    // The limit the trials fail is named.
    // The limit the trials fail is named, with how many fail.
    assert!(screen.contains("trials failing: settling"), "{screen}");
    // Larger screens too.
    let big = screen_at(&a, 120, 40);
    assert!(big.contains("yield") && big.contains("margin"), "{big}");
}

#[test]
fn a_change_drops_the_result_and_a_new_one_follows() {
    let mut s = example("line_driver_cable");
    s.spread.as_mut().unwrap().trials = Some(200);
    let mut a = on_spread_view(s);
    let before = a.spread.result.clone().unwrap();
    // Select rf (the start) and step it: the old result is gone at once.
    a.on_key(key(KeyCode::Right));
    a.tick();
    assert!(a.spread.result.is_none());
    assert!(screen_at(&a, 80, 24).contains("computing the spread"));
    finish_spread(&mut a);
    let after = a.spread.result.clone().unwrap();
    let gain = |r: &spread::SpreadResult| r.figure("dc_gain").unwrap().nominal.unwrap();
    assert!(gain(&after) > gain(&before), "rf up raises the gain");
    assert_eq!(
        after,
        spread::spread(&a.slot().scenario, &spread::Run::default())
    );
}

#[test]
fn leaving_the_view_stops_the_job() {
    let mut s = example("line_driver_cable");
    s.spread.as_mut().unwrap().trials = Some(100_000);
    let mut a = App::new(vec![(s, None)], Theme::new(false, false));
    while a.view != ViewId::Spread {
        a.on_key(key(KeyCode::Char('v')));
    }
    a.tick();
    assert!(a.spread.running());
    a.on_key(key(KeyCode::Char('v')));
    a.tick();
    assert!(!a.spread.running());
}

/// One `spec` warning per limit the nominal stage misses, with the numbers.
#[test]
fn spec_failures_are_warnings() {
    let mut s = example("line_driver_cable");
    let spec = s.spec.as_mut().unwrap();
    spec.pm_min_deg = Some(89.0);
    spec.noise_rms_max = Some(1.0e-6);
    let e = evaluate(&s);
    let w: Vec<_> = e.warnings.iter().filter(|w| w.code == "spec").collect();
    assert_eq!(w.len(), 2, "{w:?}");
    let pm = e.analysis.phase_margin_deg.unwrap();
    assert!(
        w[0].text.contains("pm_min_deg") && w[0].text.contains("< 89"),
        "{}",
        w[0].text
    );
    assert!(
        w[0].text.contains(&format!("{:.1}", pm)) || w[0].text.contains(&format!("{:.2}", pm)),
        "{} vs {pm}",
        w[0].text
    );
    assert!(
        w[1].text.contains("noise_rms_max") && w[1].text.contains("> 1 µV"),
        "{}",
        w[1].text
    );
    // The file as it is meets its spec: no spec warning.
    assert!(evaluate(&example("line_driver_cable"))
        .warnings
        .iter()
        .all(|w| w.code != "spec"));
}

#[test]
fn histogram_columns_keep_bar_heights_at_every_width() {
    use loopwright::study::spread::BINS;
    use loopwright::ui::spread_view::columns;
    // A histogram's bar height stands for the count in an equal-width bin
    // (the definition of a histogram): equal counts must draw level bars
    // and rising counts rising bars at any panel width, whether bins are
    // widened or merged to fit it.
    let flat = [100usize; BINS];
    let mut rising = [0usize; BINS];
    for (i, n) in rising.iter_mut().enumerate() {
        *n = i + 1;
    }
    for w in 1..=3 * BINS {
        let c = columns(&flat, w);
        assert_eq!(c.len(), w);
        assert!(c.iter().all(|&n| n == c[0]), "width {w}: {c:?}");
        let r = columns(&rising, w);
        assert!(r.windows(2).all(|p| p[0] <= p[1]), "width {w}: {r:?}");
    }
}

/// A figure the trials do not move (to the shown digits: the ADC
/// driver's phase margin, "71°±0°") is drawn as one mark with "no
/// spread", not as full-height bars, and its axis names the value once.
#[test]
fn a_figure_that_does_not_move_shows_no_spread() {
    let mut s = example("adc_driver_2n2");
    // Resistors within 0.001 % (the least accepted) and nothing else
    // varied: the margin moves by far less than a degree.
    s.stage.tolerance = 1e-5;
    let sp = s.spread.as_mut().unwrap();
    sp.trials = Some(100);
    (sp.cap_tol, sp.gbw_tol, sp.ro_tol) = (None, None, None);
    for ascii in [false, true] {
        let mut a = App::new(vec![(s.clone(), None)], Theme::new(false, ascii));
        while a.view != ViewId::Spread {
            a.on_key(key(KeyCode::Char('v')));
        }
        finish_spread(&mut a);
        for (w, h) in [(80, 24), (120, 40)] {
            let screen = screen_at(&a, w, h);
            if !ascii {
                assert!(screen.contains("±0°"), "{screen}");
            }
            // The limits are still read out under the panel.
            assert!(
                screen.contains("≥60°") || screen.contains(">60"),
                "{screen}"
            );
            assert!(screen.contains("no spread"), "{screen}");
            // The margin's panel is the last: right of "no spread", no bar.
            let bar = if ascii { '#' } else { '█' };
            for line in screen.lines() {
                let right: String = line.chars().skip(w as usize * 2 / 3).collect();
                assert!(!right.contains(bar), "{line}\n{screen}");
            }
        }
    }
}

/// The SVG of the same stage: the margin that does not move is one mark
/// labelled "no spread" with its value, not a full-height bar (the views
/// issue, item 10).
#[test]
fn the_spread_svg_marks_a_figure_that_does_not_move() {
    use loopwright::output::svg::{self, Evaluated, Look};
    let mut s = example("adc_driver_2n2");
    s.stage.tolerance = 1e-5;
    let sp = s.spread.as_mut().unwrap();
    sp.trials = Some(100);
    (sp.cap_tol, sp.gbw_tol, sp.ro_tol) = (None, None, None);
    let eval = evaluate(&s);
    let view = loopwright::output::views::VIEWS
        .iter()
        .find(|v| v.name == "spread")
        .unwrap();
    let look = Look {
        width: 800,
        height: 500,
        mono: false,
    };
    let stages = [Evaluated {
        scenario: &s,
        eval: &eval,
    }];
    let text = svg::render(view, &stages, look).unwrap();
    assert!(text.contains("no spread: "), "no mark in the spread SVG");
}

/// Issue 25 item 9 (the workbench's memory creeping over thousands of
/// keys): every step key in the spread view starts a new job, and each
/// new set of threads left its own heaps behind. One pool serves every
/// job, so however many keys come, the threads that ever ran a trial are
/// at most the pool's (rayon's default: one per core), and a new key
/// stops and joins the old job first: never more than one job's thread
/// alive, none after leaving the view.
#[test]
fn a_key_storm_in_the_spread_view_keeps_one_pool_and_one_job() {
    let mut s = example("line_driver_cable");
    s.spread.as_mut().unwrap().trials = Some(100_000);
    let mut a = App::new(vec![(s, None)], Theme::new(false, false));
    while a.view != ViewId::Spread {
        a.on_key(key(KeyCode::Char('v')));
    }
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    for i in 0..30 {
        // rf up, then back down: each a different stage from the job's.
        a.on_key(key(if i % 2 == 0 {
            KeyCode::Right
        } else {
            KeyCode::Left
        }));
        a.tick();
        assert!(a.spread.running(), "key {i} started a job");
        assert!(
            a.spread.jobs_alive() <= 1,
            "key {i}: {}",
            a.spread.jobs_alive()
        );
        // Let the new job run trials, so its threads are counted.
        while a.spread.done() == 0 && a.spread.running() {
            std::thread::sleep(std::time::Duration::from_millis(1));
        }
        assert!(
            a.spread.jobs_alive() <= 1,
            "key {i}: {}",
            a.spread.jobs_alive()
        );
    }
    assert!(
        a.spread.worker_threads() <= cores,
        "{} threads ran trials over 30 jobs on {cores} cores",
        a.spread.worker_threads()
    );
    assert!(a.spread.worker_threads() >= 1);
    a.on_key(key(KeyCode::Char('v')));
    a.tick();
    assert_eq!(a.spread.jobs_alive(), 0, "leaving the view ends the job");
}
