//! The workbench's keys, driven through `App::on_key` and checked through
//! the slots' scenarios and the drawn screen (TestBackend, mono theme).

use crate::support::cli::temp_dir;
use crate::support::keys::{key, press, screen_at, type_text};
use crate::support::warnings::warnings_of;
use crossterm::event::KeyCode;
use loopwright::model::scenario::Scenario;
use loopwright::ui::app::App;
use loopwright::ui::theme::Theme;

fn demo_app() -> App {
    App::new(
        vec![(loopwright::files::load::demo(), None)],
        Theme::new(false, false),
    )
}

/// Rows below rf (selected at start) in the demo's parameter pane, in the
/// README's order: stage (topology rg rf cf riso series tolerance),
/// amplifier (a0 gbw fp2 rin cin ro en, en corner, in, in corner), source
/// and load (source r, load r, load c), environment (temp, band).
const CF: usize = 1;
const GBW: usize = 6;
/// Rows from rf down to temperature, counted in the parameter table among
/// the rows the demo shows (its stage has no riso, so no feedback row).
fn temp_rows() -> usize {
    let demo = loopwright::files::load::demo();
    let at = |path| {
        loopwright::model::params::PARAMS
            .iter()
            .filter(|p| p.applies(&demo))
            .position(|p| p.path == path)
            .unwrap()
    };
    at("temp_c") - at("stage.rf")
}

fn select_below_rf(a: &mut App, rows: usize) {
    press(a, KeyCode::Down, rows);
}

/// The 1-2-5 sequence per decade (common practice for model numbers):
/// the next member above (or below) v.
fn next_125(v: f64, up: bool) -> f64 {
    let mut members: Vec<f64> = (-15..=15)
        .flat_map(|e| [1.0, 2.0, 5.0].map(|m| m * 10f64.powi(e)))
        .collect();
    members.sort_by(f64::total_cmp);
    if up {
        *members.iter().find(|&&m| m > v * (1.0 + 1e-9)).unwrap()
    } else {
        *members
            .iter()
            .rev()
            .find(|&&m| m < v * (1.0 - 1e-9))
            .unwrap()
    }
}

#[test]
fn capacitors_step_along_e12() {
    // IEC 60063 E12: … 8.2, 10, 12, 15 …; the demo's cf is 1 pF.
    let mut a = demo_app();
    select_below_rf(&mut a, CF);
    a.on_key(key(KeyCode::Right));
    assert!((a.slots[0].scenario.stage.cf.unwrap() - 1.2e-12).abs() < 1e-24);
    a.on_key(key(KeyCode::Char('+')));
    assert!((a.slots[0].scenario.stage.cf.unwrap() - 1.5e-12).abs() < 1e-24);
    press(&mut a, KeyCode::Char('-'), 3);
    assert!((a.slots[0].scenario.stage.cf.unwrap() - 0.82e-12).abs() < 1e-24);
}

#[test]
fn model_numbers_step_1_2_5_and_temperature_by_5() {
    let mut a = demo_app();
    select_below_rf(&mut a, GBW);
    let gbw = a.slots[0].scenario.amp.gbw;
    a.on_key(key(KeyCode::Right));
    assert_eq!(a.slots[0].scenario.amp.gbw, next_125(gbw, true));
    press(&mut a, KeyCode::Char('-'), 2);
    assert_eq!(
        a.slots[0].scenario.amp.gbw,
        next_125(gbw, false),
        "from {gbw}"
    );
    // Temperature steps by 5 °C (README).
    let mut a = demo_app();
    select_below_rf(&mut a, temp_rows());
    let t = a.slots[0].scenario.temp_c;
    a.on_key(key(KeyCode::Char('+')));
    assert_eq!(a.slots[0].scenario.temp_c, t + 5.0);
    press(&mut a, KeyCode::Left, 3);
    assert_eq!(a.slots[0].scenario.temp_c, t - 10.0);
    assert!(screen_at(&a, 100, 30).contains("▸temp "));
}

#[test]
fn archetypes_set_their_values_and_stay_steppable() {
    // Each archetype's numbers land in the amplifier; gbw then steps along
    // 1-2-5 from the archetype's value.
    let list = loopwright::ui::app::archetypes();
    let mut a = demo_app();
    a.on_key(key(KeyCode::Char('a')));
    a.on_key(key(KeyCode::Down));
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slots[0].scenario.amp, list[1].amp);
    select_below_rf(&mut a, GBW);
    a.on_key(key(KeyCode::Right));
    assert_eq!(a.slots[0].scenario.amp.gbw, next_125(list[1].amp.gbw, true));
}

#[test]
fn an_archetype_sets_or_clears_every_amplifier_field_and_names_them() {
    // The old part had a slew rate, swing, an input range and an
    // input-noise corner; the precision CMOS archetype (third) gives its
    // own limits and no input-noise corner. After the pick the amplifier
    // is the archetype's, field for field, and the status line names what
    // was set and what was cleared.
    let list = loopwright::ui::app::archetypes();
    let arch = &list[2];
    assert!(arch.amp.inoise_corner.is_none(), "{}", arch.name);
    let mut s = loopwright::files::load::demo();
    s.supply = Some(loopwright::model::scenario::Supply {
        neg: -15.0,
        pos: 15.0,
        ..Default::default()
    });
    s.amp.slew = Some(123.0e6);
    s.amp.swing_neg = Some(0.7);
    s.amp.swing_pos = Some(0.7);
    s.amp.cm_neg = Some(2.5);
    s.amp.inoise_corner = Some(321.0);
    let before = s.clone();
    let mut a = App::new(vec![(s, None)], Theme::new(false, false));
    a.on_key(key(KeyCode::Char('a')));
    press(&mut a, KeyCode::Down, 2);
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slots[0].scenario.amp, arch.amp);
    // The fields that differ, counted here from the parameter table: the
    // status names them, as many as fit, then "+N more".
    let differ: Vec<&str> = loopwright::model::params::PARAMS
        .iter()
        .filter(|p| p.path.starts_with("amp."))
        .filter(|p| p.get(&before) != p.get(&a.slots[0].scenario))
        .map(|p| p.path.trim_start_matches("amp."))
        .collect();
    for label in ["slew", "swing_neg", "swing_pos", "cm_neg", "inoise_corner"] {
        assert!(differ.contains(&label), "{label}: {differ:?}");
    }
    let status = a.status.clone();
    assert!(status.contains(&arch.name), "{status}");
    let (_, list) = status.split_once("changed ").expect("names the changes");
    let (names, more) = match list.split_once(" +") {
        Some((n, m)) => (n, m.trim_end_matches(" more").parse::<usize>().unwrap()),
        None => (list, 0),
    };
    let shown: Vec<&str> = names.split(", ").collect();
    assert_eq!(shown.len() + more, differ.len(), "{status}");
    for name in shown {
        assert!(differ.contains(&name), "{name}: {status}");
    }
    // Picking the same one again changes nothing, and says so.
    a.on_key(key(KeyCode::Char('a')));
    a.on_key(key(KeyCode::Enter));
    assert!(a.status.contains("nothing changed"), "{}", a.status);
}

#[test]
fn typing_none_removes_an_optional_part() {
    let mut a = demo_app();
    select_below_rf(&mut a, CF);
    assert!(a.slots[0].scenario.stage.cf.is_some());
    a.on_key(key(KeyCode::Enter));
    press(&mut a, KeyCode::Backspace, 20);
    type_text(&mut a, "none");
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slots[0].scenario.stage.cf, None);
    let text = screen_at(&a, 100, 30);
    let row = text.lines().find(|l| l.contains(" cf ")).unwrap();
    assert!(row.contains("none"), "{row}");
}

#[test]
fn save_asks_for_a_path_when_there_is_none() {
    let d = temp_dir("savepath");
    let mut a = demo_app();
    a.on_key(key(KeyCode::Right));
    a.on_key(key(KeyCode::Char('s')));
    assert!(a.status.contains("type a path"), "{}", a.status);
    let p = d.join("asked");
    type_text(&mut a, p.to_str().unwrap());
    a.on_key(key(KeyCode::Enter));
    let saved = Scenario::load(&d.join("asked.ron")).unwrap();
    assert_eq!(saved, a.slots[0].scenario);
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn warnings_scroll() {
    let p = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/buffer_rings_10n.ron"
    );
    let s = Scenario::load(std::path::Path::new(p)).unwrap();
    let n = warnings_of(&s).len();
    assert!(n >= 3, "{n} warnings");
    let mut a = App::new(vec![(s, None)], Theme::new(false, false));
    let first = screen_at(&a, 80, 24);
    a.on_key(key(KeyCode::Char(']')));
    let second = screen_at(&a, 80, 24);
    assert!(
        second.contains(&format!(" of {n} ([ ] scroll)")),
        "{second}"
    );
    assert!(second.contains(" 2–"), "{second}");
    // Scrolling stops at the last warning and comes back with [.
    press(&mut a, KeyCode::PageDown, 2 * n);
    assert!(screen_at(&a, 80, 24).contains(&format!(" {n}–{n} of {n}")));
    press(&mut a, KeyCode::Char('['), 2 * n);
    assert_eq!(screen_at(&a, 80, 24), first);
}

#[test]
fn ascii_marks_differing_parameters_with_a_hash() {
    let mut a = App::new(
        vec![(loopwright::files::load::demo(), None)],
        Theme::new(false, true),
    );
    a.on_key(key(KeyCode::Char('c')));
    a.on_key(key(KeyCode::Tab));
    a.on_key(key(KeyCode::Right));
    let text = screen_at(&a, 100, 30);
    // `#` (not trace A's `*`), then the selected row's pointer `>`.
    assert!(text.contains("#>rf"), "{text}");
    assert!(!text.contains('≠'));
}

#[test]
fn two_files_open_side_by_side() {
    // As `loopwright A.ron B.ron` does: both files loaded, A and B rows.
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios/");
    let (pa, pb) = (
        std::path::PathBuf::from(format!("{dir}buffer_rings_10n.ron")),
        std::path::PathBuf::from(format!("{dir}line_driver_cable.ron")),
    );
    let (sa, sb) = (Scenario::load(&pa).unwrap(), Scenario::load(&pb).unwrap());
    let a = App::new(
        vec![(sa.clone(), Some(pa)), (sb.clone(), Some(pb))],
        Theme::new(false, false),
    );
    assert_eq!(a.slots.len(), 2);
    assert_eq!(a.slots[0].scenario, sa);
    assert_eq!(a.slots[1].scenario, sb);
    let text = screen_at(&a, 100, 30);
    for row in ["A ", "B ", "Δ "] {
        assert!(text.lines().any(|l| l.starts_with(row)), "{row}:\n{text}");
    }
    assert!(text.contains("≠ riso"), "{text}");
}

#[test]
fn p_writes_the_plot_view_beside_the_file() {
    let dir = temp_dir("key-p");
    let path = dir.join("stage.ron");
    std::fs::write(&path, loopwright::files::load::DEMO_RON).unwrap();
    let s = Scenario::load(&path).unwrap();
    let mut a = App::new(vec![(s, Some(path.clone()))], Theme::new(false, false));
    a.on_key(key(KeyCode::Char('v')));
    a.on_key(key(KeyCode::Char('p')));
    let first = dir.join("stage-loop.svg");
    let svg = std::fs::read_to_string(&first).expect("figure written");
    let doc = roxmltree::Document::parse(&svg).expect("SVG is XML");
    assert!(doc
        .descendants()
        .any(|n| n.text().is_some_and(|t| t.contains("Loop gain"))));
    assert!(a.status.contains("stage-loop.svg"), "{}", a.status);
    // A second press keeps the first figure and takes the next name.
    a.on_key(key(KeyCode::Char('p')));
    assert_eq!(std::fs::read_to_string(&first).unwrap(), svg);
    assert!(dir.join("stage-loop-2.svg").exists());
    assert!(a.status.contains("stage-loop-2.svg"), "{}", a.status);
    std::fs::remove_dir_all(&dir).ok();
}

fn ctrl(c: char) -> crossterm::event::KeyEvent {
    crossterm::event::KeyEvent::new(KeyCode::Char(c), crossterm::event::KeyModifiers::CONTROL)
}

#[test]
fn typing_replaces_the_offered_value_and_the_cursor_keys_edit_it() {
    // rf is 10 kΩ (assets/demo.ron); its field opens offering "10k".
    let mut a = demo_app();
    a.on_key(key(KeyCode::Enter));
    type_text(&mut a, "4k7");
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slots[0].scenario.stage.rf, Some(4.7e3));
    // The field now offers "4.7k"; Home, then typing inserts at the
    // start: "14.7k".
    a.on_key(key(KeyCode::Enter));
    a.on_key(key(KeyCode::Home));
    type_text(&mut a, "1");
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slots[0].scenario.stage.rf, Some(14.7e3));
    // ← three times, then Backspace edits inside: "14.7k" → "1.7k".
    a.on_key(key(KeyCode::Enter));
    press(&mut a, KeyCode::Left, 3);
    a.on_key(key(KeyCode::Backspace));
    let text = screen_at(&a, 80, 24);
    assert!(text.contains(" rf = 1.7k"), "{text}");
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slots[0].scenario.stage.rf, Some(1.7e3));
}

#[test]
fn control_keys_clear_delete_a_word_and_are_never_typed() {
    let mut a = demo_app();
    a.on_key(key(KeyCode::Enter));
    a.on_key(key(KeyCode::End));
    // Ctrl-A and Ctrl-E are not bound in a field: nothing is typed.
    a.on_key(ctrl('a'));
    a.on_key(ctrl('e'));
    type_text(&mut a, " 22k");
    // Ctrl-W deletes the word before the cursor: back to "10k ".
    a.on_key(ctrl('w'));
    let text = screen_at(&a, 80, 24);
    assert!(text.contains(" rf = 10k _"), "{text}");
    // Ctrl-U clears; then a fresh value.
    a.on_key(ctrl('u'));
    type_text(&mut a, "12k");
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slots[0].scenario.stage.rf, Some(12e3));
}

#[test]
fn save_as_typed_over_the_offered_path_replaces_it() {
    let d = temp_dir("saveas-replace");
    let old = d.join("old.ron");
    std::fs::write(&old, loopwright::files::load::DEMO_RON).unwrap();
    let s = Scenario::load(&old).unwrap();
    let mut a = App::new(vec![(s, Some(old.clone()))], Theme::new(false, false));
    a.on_key(key(KeyCode::Right));
    a.on_key(key(KeyCode::Char('S')));
    let new = d.join("new");
    type_text(&mut a, new.to_str().unwrap());
    a.on_key(key(KeyCode::Enter));
    assert!(d.join("new.ron").is_file(), "{}", a.status);
    assert!(!d.join("old.ron").join("new.ron").exists());
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn copy_asks_before_replacing_unsaved_changes_and_titles_the_copy() {
    let mut a = demo_app();
    a.on_key(key(KeyCode::Char('c')));
    assert_eq!(a.slots.len(), 2);
    let title = &loopwright::files::load::demo().title;
    assert_eq!(a.slots[1].scenario.title, format!("{title} (copy of A)"));
    // B is unsaved (a copy): copying A again asks, and "n" keeps B.
    a.on_key(key(KeyCode::Tab));
    a.on_key(key(KeyCode::Right));
    let b_rf = a.slots[1].scenario.stage.rf;
    a.on_key(key(KeyCode::Tab));
    a.on_key(key(KeyCode::Char('c')));
    assert!(a.status.contains("B has unsaved changes"), "{}", a.status);
    a.on_key(key(KeyCode::Char('n')));
    assert_eq!(a.slots[1].scenario.stage.rf, b_rf);
    a.on_key(key(KeyCode::Char('c')));
    a.on_key(key(KeyCode::Char('y')));
    assert_eq!(a.slots[1].scenario.stage.rf, a.slots[0].scenario.stage.rf);
    // Copying a copy does not pile up the marks.
    a.on_key(key(KeyCode::Tab));
    a.on_key(key(KeyCode::Char('c')));
    a.on_key(key(KeyCode::Char('y')));
    assert_eq!(a.slots[0].scenario.title, format!("{title} (copy of B)"));
}

#[test]
fn backspace_takes_back_the_last_change_and_puts_it_back() {
    let mut a = demo_app();
    let before = a.slots[0].scenario.clone();
    a.on_key(key(KeyCode::Right));
    let after = a.slots[0].scenario.clone();
    assert_ne!(before, after);
    assert!(a.slots[0].dirty);
    a.on_key(key(KeyCode::Backspace));
    assert_eq!(a.slots[0].scenario, before);
    assert!(screen_at(&a, 80, 24).contains("10kΩ"));
    assert!(a.status.contains("taken back"), "{}", a.status);
    // Back at the stage as loaded: nothing unsaved any more.
    assert!(!a.slots[0].dirty);
    assert!(!screen_at(&a, 80, 24).contains(" edited"));
    a.on_key(key(KeyCode::Backspace));
    assert_eq!(a.slots[0].scenario, after);
    assert!(a.slots[0].dirty);
    // The message says which way it went.
    assert!(a.status.contains("put back"), "{}", a.status);
    // Stepping back by hand also leaves nothing unsaved.
    a.on_key(key(KeyCode::Left));
    assert_eq!(a.slots[0].scenario, before);
    assert!(!a.slots[0].dirty);
}

#[test]
fn the_title_can_be_edited() {
    let mut a = demo_app();
    a.on_key(key(KeyCode::Char('t')));
    type_text(&mut a, "Strain gauge, gain 11");
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slots[0].scenario.title, "Strain gauge, gain 11");
    // The status line speaks of the title, not of the selected parameter.
    assert!(
        a.status.contains("title → Strain gauge, gain 11"),
        "{}",
        a.status
    );
    assert!(a.slots[0].dirty);
    assert!(screen_at(&a, 80, 24).contains("Strain gauge, gain 11"));
    // Esc keeps the title.
    a.on_key(key(KeyCode::Char('t')));
    type_text(&mut a, "x");
    a.on_key(key(KeyCode::Esc));
    assert_eq!(a.slots[0].scenario.title, "Strain gauge, gain 11");
}
