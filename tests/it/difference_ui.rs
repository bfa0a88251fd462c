//! The difference amplifier in the workbench: its CMRR on screen at 80×24
//! and 120×40, the CMRR plot's range (a rejection past 160 dB drawn at
//! 160 dB and said so), and a kind switched in the pane keeping the
//! cursor on a shown row and the parts both kinds share.

use crate::support::keys::{key, press, screen_at};
use crossterm::event::KeyCode;
use loopwright::model::scenario::{Scenario, Topology};
use loopwright::ui::app::App;
use loopwright::ui::theme::Theme;

fn shunt() -> Scenario {
    Scenario::load(std::path::Path::new("scenarios/shunt_readout_gain20.ron")).unwrap()
}

fn app_of(s: Scenario) -> App {
    App::new(vec![(s, None)], Theme::new(false, false))
}

/// The figures row's header and A row (the two lines starting with the
/// header's "gain").
fn figures_row(screen: &str) -> (String, String) {
    let lines: Vec<&str> = screen.lines().collect();
    let i = lines
        .iter()
        .position(|l| l.trim_start().starts_with("gain ") && l.contains("error"))
        .expect("a figures header");
    (lines[i].to_string(), lines[i + 1].to_string())
}

#[test]
fn the_cmrr_is_in_the_figures_row_and_the_readout_at_80_by_24_and_120_by_40() {
    let app = app_of(shunt());
    for (w, h) in [(80, 24), (120, 40)] {
        let screen = screen_at(&app, w, h);
        let (head, row) = figures_row(&screen);
        assert!(head.contains("CMRR"), "{w}×{h}: {head}");
        // The matched stage's rejection is above 160 dB: the cell says so
        // rather than print a number no real stage holds (the rule).
        assert!(row.contains(">160"), "{w}×{h}: {row}");
        let readout = screen
            .lines()
            .find(|l| l.starts_with("A @"))
            .expect("a readout");
        assert!(readout.contains("CMRR"), "{w}×{h}: {readout}");
    }
}

#[test]
fn the_cmrr_plot_is_drawn_at_most_at_160_db_and_says_so() {
    let app = app_of(shunt());
    let t = &app.slots[0].traces;
    assert!(!t.cmrr_db.is_empty(), "a CMRR trace");
    // The nominal stage's resistors match: its DC rejection is above the
    // 160 dB ceiling (the text rule), drawn at the ceiling.
    assert!(t.cmrr_clamped);
    assert!(t.cmrr_db.iter().all(|p| p.1 <= 160.0), "{:?}", t.cmrr_db);
    assert!(t.cmrr_db.iter().any(|p| p.1 == 160.0));
    // At 120×40 the response view shows the CMRR as a third plot, its name
    // saying where it is cut.
    let screen = screen_at(&app, 120, 40);
    assert!(screen.contains("CMRR (>160dB"), "{screen}");
    assert!(screen.contains("-90°"), "the phase plot stays: {screen}");
    // At 80×24, g cycles magnitude → phase → CMRR.
    let mut app = app;
    press(&mut app, KeyCode::Char('g'), 2);
    let screen = screen_at(&app, 80, 24);
    assert!(screen.contains("160dB"), "{screen}");
}

#[test]
fn the_start_row_is_one_the_kind_shows() {
    let app = app_of(shunt());
    assert!(
        app.visible().contains(&app.selected),
        "{}",
        app.selected.path
    );
    assert_eq!(app.selected.path, "stage.r1");
}

#[test]
fn switching_the_kind_keeps_the_cursor_on_a_shown_row_and_shared_parts() {
    let mut s = shunt();
    s.stage.riso = Some(47.0);
    let mut app = app_of(s);
    // From r3 (a part only the difference stage has) up to topology.
    press(&mut app, KeyCode::Down, 2);
    assert_eq!(app.selected.path, "stage.r3");
    while app.selected.path != "stage.topology" {
        app.on_key(key(KeyCode::Up));
    }
    for i in 0..Topology::ALL.len() {
        app.on_key(key(KeyCode::Right));
        let sc = &app.slots[0].scenario;
        // Each step is taken (a switch away from two inputs drops the
        // common-mode fields instead of being refused over them).
        assert_eq!(sc.stage.topology, Topology::ALL[i], "{}", app.status);
        assert!(app.visible().contains(&app.selected));
        // cf and riso are parts every kind here has: kept as they were.
        if sc.stage.topology.kind().part("stage.cf").is_some() {
            assert_eq!(sc.stage.cf, Some(22e-12), "{:?}", sc.stage.topology);
        }
        assert_eq!(sc.stage.riso, Some(47.0), "{:?}", sc.stage.topology);
    }
    // Now back on the difference stage (five steps round); from r3, the
    // undo key takes the stage back to the kind before it: r3 is hidden
    // there, and the cursor moves to a row that kind shows.
    assert_eq!(app.slots[0].scenario.stage.topology, Topology::Difference);
    app.on_key(key(KeyCode::Left));
    app.on_key(key(KeyCode::Right));
    while app.selected.path != "stage.r3" {
        app.on_key(key(KeyCode::Down));
    }
    app.on_key(key(KeyCode::Backspace));
    let sc = &app.slots[0].scenario;
    assert_eq!(sc.stage.topology, Topology::Transimpedance);
    assert!(
        app.visible().contains(&app.selected),
        "{}",
        app.selected.path
    );
}

#[test]
fn help_and_the_manual_name_every_kind() {
    use crate::support::cli::stdout_of;
    // Every kind a stage file accepts (Topology::NAMES, the file's names).
    let main = stdout_of(&["--help"]);
    let pairs = stdout_of(&["pairs", "--help"]);
    let dir = crate::support::cli::temp_dir("manual_kinds");
    let _ = std::fs::remove_dir_all(&dir);
    stdout_of(&["manual", "--dir", dir.to_str().unwrap()]);
    let man = std::fs::read_to_string(dir.join("loopwright.1")).unwrap();
    let pairs_man = std::fs::read_to_string(dir.join("loopwright-pairs.1")).unwrap();
    for name in Topology::NAMES {
        assert!(main.contains(name), "--help lacks {name}");
        assert!(pairs.contains(name), "pairs --help lacks {name}");
        assert!(man.contains(name), "the man page lacks {name}");
        assert!(pairs_man.contains(name), "the pairs page lacks {name}");
    }
}

#[test]
fn a_difference_against_a_cmrr_past_the_ceiling_is_not_a_number() {
    use crate::support::cli::stdout_of;
    // A: the matched shunt read-out (CMRR above 160 dB); B: r4 2 % low.
    let dir = crate::support::cli::temp_dir("cmrr_delta");
    let a = "scenarios/shunt_readout_gain20.ron";
    let text = std::fs::read_to_string(a).unwrap();
    let b = dir.join("b.ron");
    std::fs::write(&b, text.replace("r4: 200000.0", "r4: 196000.0")).unwrap();
    let out = stdout_of(&["compare", a, b.to_str().unwrap()]);
    let line = out
        .lines()
        .find(|l| l.starts_with("CMRR at DC"))
        .expect("a CMRR line");
    // The text rule: "> 160 dB" above 160 dB; A's "more than" has
    // no difference to B.
    assert!(line.contains("> 160.00 dB"), "{line}");
    assert!(line.trim_end().ends_with("none"), "{line}");
    let app = App::new(
        vec![(shunt(), None), (Scenario::load(&b).unwrap(), None)],
        Theme::new(false, false),
    );
    let screen = screen_at(&app, 120, 40);
    let (head, _) = figures_row(&screen);
    let delta = screen
        .lines()
        .find(|l| l.starts_with("Δ"))
        .expect("a Δ row");
    // The columns are right-aligned: the Δ cell ends where "CMRR" does.
    let end = head.chars().collect::<Vec<_>>();
    let at = (0..end.len())
        .find(|&i| end[i..].starts_with(&['C', 'M', 'R', 'R']))
        .expect("a CMRR column")
        + 4;
    let cells: String = delta.chars().take(at).collect();
    let cell = cells.split_whitespace().last().unwrap();
    assert_eq!(cell, "—", "{head}\n{delta}");
}
