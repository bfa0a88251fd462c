//! The warnings strip with two stages (both stages' warnings, tagged A and
//! B, worst first) and the ASCII look (the differs mark and the severity
//! symbols stay apart from trace A's `*`).

use crate::support::keys::{key, screen_at};
use crossterm::event::KeyCode;
use loopwright::judge::evaluate;
use loopwright::judge::Severity;
use loopwright::model::scenario::Scenario;
use loopwright::ui::app::App;
use loopwright::ui::theme::Theme;

fn example(name: &str) -> Scenario {
    Scenario::load(std::path::Path::new(&format!("scenarios/{name}.ron"))).unwrap()
}

#[test]
fn both_stages_warnings_are_in_the_strip_tagged() {
    // B rings into 10 nF: a severe phase-margin warning of its own.
    let (a, b) = (example("line_driver_cable"), example("buffer_rings_10n"));
    let wb = evaluate(&b).warnings;
    assert!(wb.iter().any(|w| w.severity == Severity::Severe));
    let app = App::new(vec![(a, None), (b, None)], Theme::new(false, false));
    assert_eq!(app.active, 0, "A is edited");
    let screen = screen_at(&app, 120, 40);
    assert!(screen.contains("Warnings of A and B"), "{screen}");
    assert!(screen.contains("B phase-margin"), "{screen}");
    // Worst first across both stages.
    let strip = app.strip_warnings();
    assert_eq!(strip.len(), app.slots[0].eval.warnings.len() + wb.len());
    assert!(strip.windows(2).all(|w| w[0].1.severity >= w[1].1.severity));
}

#[test]
fn ascii_marks_differ_from_trace_a() {
    let s = example("buffer_rings_10n");
    let mut app = App::new(vec![(s.clone(), None), (s, None)], Theme::new(false, true));
    // B differs in rf: the pane marks it.
    app.on_key(key(KeyCode::Tab));
    app.on_key(key(KeyCode::Right));
    let screen = screen_at(&app, 100, 30);
    assert!(screen.contains("!! severe"), "{screen}");
    assert!(!screen.contains("!!severe"), "{screen}");
    let pane_rf = screen
        .lines()
        .find(|l| l.contains(">rf "))
        .unwrap_or_else(|| panic!("{screen}"));
    // The parameter pane's part of the row (the plot beside it draws A
    // with `*`).
    let pane_rf: String = pane_rf.chars().take(33).collect();
    assert!(pane_rf.contains('#') && !pane_rf.contains('*'), "{pane_rf}");
}

/// The selected row carries a pointer, and at 80×24 the pane says how
/// many rows run past its top and bottom edges.
#[test]
fn pane_pointer_and_scroll_marks() {
    let mut app = App::new(
        vec![(example("adc_driver_2n2"), None)],
        Theme::new(false, false),
    );
    let screen = screen_at(&app, 80, 24);
    let rf = screen.lines().find(|l| l.contains("rf ")).unwrap();
    assert!(rf.contains("▸rf"), "{rf}");
    assert_eq!(screen.matches('▸').count(), 1, "{screen}");
    assert!(screen.lines().nth(1).is_some_and(|l| !l.contains('▲')));
    for _ in 0..12 {
        app.on_key(key(KeyCode::Down));
    }
    let screen = screen_at(&app, 80, 24);
    let count = |line: &str, arrow: char| -> usize {
        let at = line
            .find(arrow)
            .unwrap_or_else(|| panic!("{arrow} in {line}"));
        line[at + arrow.len_utf8()..]
            .split_whitespace()
            .next()
            .unwrap()
            .parse()
            .unwrap()
    };
    let lines: Vec<&str> = screen.lines().collect();
    let top = count(lines[1], '▲');
    let bottom_line = lines.iter().find(|l| l.contains('▼')).unwrap();
    let bottom = count(bottom_line, '▼');
    // Rows: one per visible parameter and one per group title.
    let vis = app.visible();
    let mut groups = vis.iter().map(|p| p.group).collect::<Vec<_>>();
    groups.dedup();
    let shown = lines
        .iter()
        .skip(2)
        .take_while(|l| l.starts_with('│'))
        .count();
    assert_eq!(top + shown + bottom, vis.len() + groups.len(), "{screen}");
}

/// The figures row: its columns keep their places as the values change
/// length (gain 11.0 → 9.3 as rg steps up), and at 80×24 with two stages
/// no column is cut at the right edge.
#[test]
fn figures_header_is_stable_and_whole() {
    let demo = loopwright::files::load::demo();
    let mut app = App::new(vec![(demo.clone(), None)], Theme::new(false, false));
    let header = |app: &App| {
        let s = screen_at(app, 100, 30);
        s.lines()
            .find(|l| l.contains(" gain ") && l.contains("f-3dB"))
            .unwrap()
            .to_string()
    };
    let before = header(&app);
    app.on_key(key(KeyCode::Up)); // rg
    for _ in 0..3 {
        app.on_key(key(KeyCode::Right));
    }
    assert!(
        app.slot().eval.analysis.dc_gain < 10.0,
        "{}",
        app.slot().eval.analysis.dc_gain
    );
    assert_eq!(header(&app), before);
    let two = App::new(
        vec![(demo.clone(), None), (demo, None)],
        Theme::new(false, false),
    );
    let s = screen_at(&two, 80, 24);
    let head = s
        .lines()
        .find(|l| l.contains(" gain ") && l.contains("f-3dB"))
        .unwrap();
    let shorts: Vec<String> = loopwright::judge::figures::FIGURES
        .iter()
        .map(|f| f.short.replace("{f}", "1k"))
        .collect();
    // The row ends with a whole column name (a cut one reads "wa", "oversh").
    let end = head.trim_end();
    assert!(
        shorts.iter().any(|x| end.ends_with(&format!(" {x}"))),
        "last column is cut:\n{head}"
    );
}

/// With two stages the plots mark both: each stage's f−3dB, margins and
/// noise band (tagged A and B), and the noise view spans both bands.
#[test]
fn both_stages_marks_on_the_plots() {
    let (a, b) = (example("mic_preamp"), example("bridge_gain_101"));
    assert_ne!(a.band, b.band, "the two example bands differ");
    let mut app = App::new(vec![(a, None), (b, None)], Theme::new(false, false));
    let response = screen_at(&app, 160, 50);
    assert!(
        response.contains("A -3dB") && response.contains("B -3dB"),
        "{response}"
    );
    app.on_key(key(KeyCode::Char('v')));
    let loop_view = screen_at(&app, 160, 50);
    assert!(
        loop_view.contains("A margin") && loop_view.contains("B margin"),
        "{loop_view}"
    );
    app.on_key(key(KeyCode::Char('v')));
    let noise = screen_at(&app, 160, 50);
    assert!(
        noise.contains("A band rms") && noise.contains("B band rms"),
        "{noise}"
    );
    assert!(
        noise.contains("A band") && noise.contains("B band"),
        "{noise}"
    );
}

/// At 80×24 with two stages the plot legend is whole.
#[test]
fn two_stage_legend_fits_at_80x24() {
    let s = example("mic_preamp");
    let app = App::new(vec![(s.clone(), None), (s, None)], Theme::new(false, false));
    let screen = screen_at(&app, 80, 24);
    assert!(screen.contains("A ─── B ···"), "{screen}");
}

/// The 80×24 layout, cell by cell where it is fixed: the title row, the
/// pane (33 columns) beside the plots, then the cursor readout (one row a
/// stage), the figures (header and a row a stage, and Δ with two), the
/// warnings and the hint line at the bottom.
#[test]
fn exact_layout_at_80x24_for_one_and_two_stages() {
    let one = vec![(example("mic_preamp"), None)];
    let two = vec![
        (example("mic_preamp"), None),
        (example("bridge_gain_101"), None),
    ];
    for stages in [one, two] {
        let n = stages.len();
        let app = App::new(stages, Theme::new(false, false));
        let screen = screen_at(&app, 80, 24);
        let rows: Vec<Vec<char>> = screen.lines().map(|l| l.chars().collect()).collect();
        assert_eq!(rows.len(), 24);
        assert!(rows.iter().all(|r| r.len() == 80), "{screen}");
        let text = |r: usize| rows[r].iter().collect::<String>();
        // The program's name at the right where the stages' names leave room.
        assert!(text(0).starts_with(" A"), "{screen}");
        assert!(
            n > 1 || text(0).trim_end().ends_with("loopwright"),
            "{screen}"
        );
        assert!(text(1).starts_with("╭ Parameters"), "{screen}");
        assert_eq!(
            (rows[1][32], rows[1][33], rows[1][79]),
            ('╮', '╭', '╮'),
            "{screen}"
        );
        let warn = (0..24).find(|&r| text(r).starts_with(" Warnings")).unwrap();
        let figures = if n > 1 { 4 } else { 2 };
        let readout = warn - figures - n;
        let pane_end = readout - 1;
        assert_eq!(
            (rows[pane_end][0], rows[pane_end][32]),
            ('╰', '╯'),
            "{screen}"
        );
        // The pane's sides; on the right the plots' sides and corners
        // (the response plot above the impedance plot).
        for (r, row) in rows.iter().enumerate().take(pane_end).skip(2) {
            assert_eq!((row[0], row[32]), ('│', '│'), "row {r}\n{screen}");
            assert!("│╯╮".contains(row[79]), "row {r}\n{screen}");
        }
        assert_eq!(rows[pane_end][79], '╯', "{screen}");
        for (i, tag) in ["A", "B"].iter().take(n).enumerate() {
            assert!(
                text(readout + i).starts_with(&format!("{tag} @ ")),
                "{screen}"
            );
            assert!(
                text(readout + n + 1 + i).starts_with(&format!("{tag} ")),
                "{screen}"
            );
        }
        assert!(text(readout + n).contains(" gain ") && text(readout + n).contains("f-3dB"));
        if n > 1 {
            assert!(text(readout + n + 3).starts_with("Δ "), "{screen}");
        }
        assert!(text(23).contains("? keys"), "{screen}");
    }
}

/// Two stages whose steps settle far apart (gain 2 and gain 101 on the
/// same 10 mV step): the step view shows each against its own final
/// value, and the summary line speaks of both.
#[test]
fn step_view_of_two_stages_compares_them() {
    let (a, b) = (example("line_driver_cable"), example("mic_preamp"));
    let mut app = App::new(vec![(a, None), (b, None)], Theme::new(false, false));
    while app.view != loopwright::ui::app::ViewId::Step {
        app.on_key(key(KeyCode::Char('v')));
    }
    let screen = screen_at(&app, 120, 40);
    assert!(screen.contains("output / final value"), "{screen}");
    assert!(
        screen.contains("A overshoot") && screen.contains("B overshoot"),
        "{screen}"
    );
}

/// Where a whole margin note finds no free cells its short form shows, so
/// both stages' margins are written at 120×40 and 80×24.
#[test]
fn both_margins_written_on_a_crowded_loop_view() {
    let (a, b) = (example("line_driver_cable"), example("mic_preamp"));
    let mut app = App::new(vec![(a, None), (b, None)], Theme::new(false, false));
    app.on_key(key(KeyCode::Char('v')));
    for (w, h) in [(120, 40), (80, 24)] {
        let s = screen_at(&app, w, h);
        assert!(
            s.contains("A margin") && s.contains("B margin"),
            "{w}x{h}\n{s}"
        );
    }
}

/// At 80×24 the help shows every key, and says that its notes (the plot
/// legend and the rest) continue on a taller terminal.
#[test]
fn help_at_80x24_says_what_it_leaves_out() {
    let mut app = App::new(
        vec![(example("mic_preamp"), None)],
        Theme::new(false, false),
    );
    app.on_key(key(KeyCode::Char('?')));
    let small = screen_at(&app, 80, 24);
    assert!(small.contains("more notes on a taller terminal"), "{small}");
    let tall = screen_at(&app, 80, 40);
    assert!(!tall.contains("more notes"), "{tall}");
    for (k, _) in loopwright::ui::keys::LEGEND {
        assert!(tall.contains(k), "{k}\n{tall}");
    }
}

/// In ASCII, B's trace is `o`: not the `+` of the axis ticks and corners.
#[test]
fn ascii_b_trace_is_not_the_tick_character() {
    let s = example("mic_preamp");
    let mut b = s.clone();
    b.stage.rf = Some(4.7e3);
    let app = App::new(vec![(s, None), (b, None)], Theme::new(false, true));
    let screen = screen_at(&app, 120, 40);
    assert!(screen.contains("A *** B ooo"), "{screen}");
    // B's trace itself (not the legend line): a run of o in a plot.
    let traced = screen
        .lines()
        .filter(|l| l.contains("||") && !l.contains("A ***"))
        .any(|l| l.contains("oo"));
    assert!(traced, "{screen}");
}

/// Trace names keep a space between them (two stages' impedance labels at
/// 80×24 ran together as "pinZout").
#[test]
fn labels_keep_apart() {
    let (a, b) = (example("mic_preamp"), example("bridge_gain_101"));
    let app = App::new(vec![(a, None), (b, None)], Theme::new(false, false));
    for (w, h) in [(80, 24), (120, 40)] {
        let s = screen_at(&app, w, h);
        for joined in [
            "pinZout", "ZinZout", "ZoutZin", "Zoutpin", "Zinpin", "pinZin",
        ] {
            assert!(!s.contains(joined), "{joined} at {w}x{h}\n{s}");
        }
    }
}

/// With `--ascii` and two stages at 80×24 the figures row keeps the
/// warning count (it is dropped last) and the margins read in `deg`, not
/// a lone `o` (readable ASCII spellings: the views issue, item 9).
#[test]
fn ascii_two_stages_keep_the_warning_count_and_spell_degrees() {
    let (a, b) = (example("mic_preamp"), example("line_driver_cable"));
    let app = App::new(vec![(a, None), (b, None)], Theme::new(false, true));
    let screen = screen_at(&app, 80, 24);
    let header = screen
        .lines()
        .find(|l| l.contains("gain") && l.contains("f-3dB"))
        .unwrap_or_else(|| panic!("{screen}"));
    assert!(header.trim_end().ends_with("warn"), "{header}");
    let row_a = screen
        .lines()
        .find(|l| l.starts_with("A ") && l.contains('%'))
        .unwrap_or_else(|| panic!("{screen}"));
    assert!(row_a.contains("deg"), "{row_a}");
    assert!(
        !row_a
            .split_whitespace()
            .any(|c| c.ends_with("0o") || c.ends_with("5o")),
        "{row_a}"
    );
}
