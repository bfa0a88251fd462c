//! Screens keep their words: at 80×24 and 120×40, UTF-8 and ASCII, one
//! and two stages, in every view of the workbench, no caption on a
//! pane's border runs into its corner (a cut number), every readout line
//! keeps the noise density, and each pane label stands two spaces clear
//! of its value.

use crate::support::keys::{key, screen_at};
use crossterm::event::KeyCode;
use loopwright::model::scenario::Scenario;
use loopwright::ui::app::{App, ViewId};
use loopwright::ui::theme::Theme;

fn example(name: &str) -> Scenario {
    Scenario::load(std::path::Path::new(&format!("scenarios/{name}.ron"))).unwrap()
}

/// The bottom-right corners of the panes on a UTF-8 screen: (row, col).
fn bottom_corners(screen: &str) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    for (r, line) in screen.lines().enumerate() {
        let cells: Vec<char> = line.chars().collect();
        let mut open = false;
        for (c, ch) in cells.iter().enumerate() {
            match ch {
                '╰' => open = true,
                '╯' if open => {
                    out.push((r, c));
                    open = false;
                }
                _ => {}
            }
        }
    }
    out
}

/// What runs into a corner: the cells just before it must be border or
/// blank, else a caption was cut there.
fn cut_captions(screen: &str, corners: &[(usize, usize)]) -> Vec<String> {
    let lines: Vec<Vec<char>> = screen.lines().map(|l| l.chars().collect()).collect();
    corners
        .iter()
        .filter_map(|&(r, c)| {
            let before = *lines.get(r)?.get(c.checked_sub(1)?)?;
            (!matches!(before, '─' | '-' | ' ')).then(|| {
                let line: String = lines[r].iter().collect();
                format!("row {r}: {line}")
            })
        })
        .collect()
}

#[test]
fn captions_never_cut_a_number_in_any_view() {
    let one = vec![(example("single_supply_inverter_clips"), None)];
    let two = vec![
        (example("single_supply_inverter_clips"), None),
        (example("line_driver_cable"), None),
    ];
    let mut faults = Vec::new();
    for stages in [one, two] {
        let n = stages.len();
        let mut utf = App::new(stages.clone(), Theme::new(false, false));
        let mut ascii = App::new(stages, Theme::new(false, true));
        let views: Vec<ViewId> = ViewId::shown().filter(|v| *v != ViewId::Spread).collect();
        for view in views {
            while utf.view != view {
                utf.on_key(key(KeyCode::Char('v')));
                ascii.on_key(key(KeyCode::Char('v')));
            }
            for (w, h) in [(80, 24), (120, 40)] {
                let u = screen_at(&utf, w, h);
                let corners = bottom_corners(&u);
                assert!(corners.len() >= 3, "{u}");
                let a = screen_at(&ascii, w, h);
                for (which, s) in [("UTF-8", &u), ("ASCII", &a)] {
                    for f in cut_captions(s, &corners) {
                        faults.push(format!("{view:?} {n} stage(s) {w}×{h} {which}: {f}"));
                    }
                }
                // Every readout line keeps the noise density (the issue's
                // fault: `--ascii`, two stages, 80 columns dropped it).
                for (which, s) in [("UTF-8", &u), ("ASCII", &a)] {
                    let lines: Vec<&str> = s
                        .lines()
                        .filter(|l| l.starts_with("A @ ") || l.starts_with("B @ "))
                        .collect();
                    assert_eq!(lines.len(), n, "{which} {view:?} {w}×{h}\n{s}");
                    for l in lines {
                        assert!(l.contains(" en "), "{which} {view:?} {w}×{h}: {l}");
                    }
                    for f in mangled_units(s) {
                        faults.push(format!("{view:?} {n} stage(s) {w}×{h} {which}: {f}"));
                    }
                    for f in run_together(s) {
                        faults.push(format!("{view:?} {n} stage(s) {w}×{h} {which}: {f}"));
                    }
                }
            }
        }
    }
    assert!(faults.is_empty(), "{}", faults.join("\n"));
}

/// Pane rows whose label is not followed by two spaces (a label run into
/// its value, as "ib ×2 per none"). A row is `│`, the differs mark, the
/// pointer, then the label: the longest parameter label it starts with.
fn run_together(screen: &str) -> Vec<String> {
    let labels: Vec<&str> = loopwright::model::params::PARAMS
        .iter()
        .map(|p| p.label)
        .collect();
    let mut out = Vec::new();
    for line in screen.lines() {
        let cells: Vec<char> = line.chars().collect();
        if !matches!(cells.first(), Some('│' | '|')) || cells.len() < 4 {
            continue;
        }
        let rest: String = cells[3..].iter().collect();
        // In ASCII a label's other glyphs are one character each.
        let starts = |l: &str| {
            l.chars().count() <= rest.chars().count()
                && l.chars()
                    .zip(rest.chars())
                    .all(|(a, b)| a == b || (!a.is_ascii() && b.is_ascii()))
        };
        let Some(label) = labels
            .iter()
            .filter(|l| starts(l))
            .max_by_key(|l| l.chars().count())
        else {
            continue;
        };
        let after: String = rest.chars().skip(label.chars().count()).take(2).collect();
        if after != "  " {
            out.push(format!("label {label:?} runs into its value: {line}"));
        }
    }
    out
}

/// Figures-table cells with a unit cut to one glyph's stand-in (the
/// issue's `88o` for 88°, `79.5MR` for 79.5 MΩ): a number ending in `o`
/// or `R`.
fn mangled_units(screen: &str) -> Vec<String> {
    screen
        .lines()
        .filter(|l| ["A ", "B ", "D "].iter().any(|t| l.starts_with(t)))
        .flat_map(|l| l.split_whitespace().map(move |w| (l, w)))
        .filter(|(_, w)| {
            let Some(num) = w.strip_suffix(['o', 'R']) else {
                return false;
            };
            let prefixes = ['f', 'p', 'n', 'u', 'm', 'k', 'M', 'G', 'T'];
            let num = num.strip_suffix(prefixes).unwrap_or(num);
            num.parse::<f64>().is_ok()
        })
        .map(|(l, w)| format!("unit cut in {w:?}: {l}"))
        .collect()
}

/// The checker: a cut unit is found.
#[test]
fn the_checker_finds_a_cut_unit() {
    assert_eq!(mangled_units("A   -9.52  88o  79.5MR  1kOhm").len(), 2);
    assert!(mangled_units("A   -9.52  88deg  79.5MOhm").is_empty());
}

/// The checker: a label one space from its value is found.
#[test]
fn the_checker_finds_a_label_run_into_its_value() {
    assert_eq!(run_together("│  ib ×2 per none      │").len(), 1);
    assert_eq!(run_together("│  kick LSB ≤0.5       │").len(), 1);
    assert!(run_together("│  ib ×2 per  none     │").is_empty());
    assert_eq!(run_together("|  ib x2 per none      |").len(), 1);
}

/// The envelope at 80×24: the need and the flat swing ceiling lie in
/// rows of their own (the fault: one row for both), each named
/// beside its own trace, for stages whose need lies within half a
/// decade of the ceiling.
#[test]
fn envelope_keeps_the_need_and_the_swing_ceiling_apart() {
    for name in [
        "light_barrier_receiver",
        "single_supply_inverter_mid_rail",
        "mid_supply_follower_fine",
    ] {
        let mut app = App::new(vec![(example(name), None)], Theme::new(false, false));
        while app.view != ViewId::Envelope {
            app.on_key(key(KeyCode::Char('v')));
        }
        let s = screen_at(&app, 80, 24);
        let lines: Vec<&str> = s.lines().collect();
        // The envelope's pane: the rows above the impedance pane.
        let row_of = |word: &str| lines[..11].iter().position(|l| l.contains(word));
        let (Some(need), Some(swing)) = (row_of("need"), row_of("swing")) else {
            panic!("{name}: need and swing named\n{s}");
        };
        // Each name sits right above or below a row of its trace; the
        // two traces' rows differ.
        let trace_row = |r: usize, word: &str| {
            let col = lines[r].chars().collect::<Vec<_>>();
            let at = lines[r]
                .find(word)
                .map(|b| lines[r][..b].chars().count())
                .unwrap();
            [r.wrapping_sub(1), r + 1]
                .into_iter()
                .filter(|&q| q < lines.len())
                .find(|&q| {
                    let c: Vec<char> = lines[q].chars().collect();
                    (at..at + word.len()).any(|i| {
                        c.get(i)
                            .is_some_and(|ch| ('\u{2801}'..='\u{28FF}').contains(ch))
                    })
                })
                .map(|q| (q, col.len()))
        };
        let (Some((tn, _)), Some((ts, _))) = (trace_row(need, "need"), trace_row(swing, "swing"))
        else {
            panic!("{name}: each name beside a trace\n{s}");
        };
        assert_ne!(
            tn, ts,
            "{name}: the need and the swing ceiling share a row\n{s}"
        );
    }
}

/// The report's header: each group's name two spaces clear of its values
/// (the "supply and signal rail − -5V").
#[test]
fn report_header_names_stand_clear_of_their_values() {
    let s = example("single_supply_inverter_clips");
    let e = loopwright::judge::evaluate(&s);
    let r = loopwright::output::report::Report::new(&s, &e, &[]);
    let mut out = Vec::new();
    loopwright::output::report::write_text(&r, &s, &e, &mut out).unwrap();
    let text = String::from_utf8(out).unwrap();
    let line = text
        .lines()
        .find(|l| l.contains("supply and signal"))
        .unwrap();
    assert!(line.contains("supply and signal  rail"), "{line}");
}

/// The checker: a caption run into its corner is found.
#[test]
fn the_checker_finds_a_cut_caption() {
    let s = "╭ a ─╮\n╰ gain −5.╯";
    let corners = bottom_corners(s);
    assert_eq!(corners, vec![(1, 10)]);
    assert_eq!(cut_captions(s, &corners).len(), 1);
    assert!(cut_captions("╭ a ─╮\n╰ gain ─╯", &corners).is_empty());
}

/// With `--ascii` and two stages the plots are not walls of `#`: where
/// traces meet, the first one drawn shows its own mark.
#[test]
fn ascii_plots_are_not_walls_of_hashes() {
    let two = vec![
        (example("single_supply_inverter_clips"), None),
        (example("line_driver_cable"), None),
    ];
    let a = App::new(two, Theme::new(false, true));
    for (w, h) in [(80, 24), (120, 40)] {
        let s = screen_at(&a, w, h);
        let pane = if w >= 110 { 38 } else { 33 };
        let hashes: usize = s
            .lines()
            .map(|l| l.chars().skip(pane).filter(|c| *c == '#').count())
            .sum();
        assert_eq!(hashes, 0, "{s}");
    }
}
