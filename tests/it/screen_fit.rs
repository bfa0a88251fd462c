//! Screens keep their words: at 80×24 and 120×40, UTF-8 and ASCII, one
//! and two stages, in every view of the workbench, no caption on a
//! pane's border runs into its corner (a cut number), and the readout
//! keeps the noise density.

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
                // The readout keeps the noise density.
                assert!(u.contains("en "), "{view:?} {w}×{h}\n{u}");
            }
        }
    }
    assert!(faults.is_empty(), "{}", faults.join("\n"));
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
