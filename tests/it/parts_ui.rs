//! The workbench's amplifier list (`a`): three groups, narrowed by
//! typing; applying a part sets every field and says which changed; `A`
//! saves the amplifier as a part, asking the name and where, and never
//! replaces a file unasked. Bad part files are listed, never fatal.

use crate::support::cli::temp_dir;
use crate::support::keys::{key, press, screen_at, type_text};
use crossterm::event::{KeyCode, KeyEvent, KeyModifiers};
use loopwright::files::parts::{parts_from_ron, project_dir};
use loopwright::ui::app::{App, Mode};
use loopwright::ui::theme::Theme;
use std::path::Path;

const USER_PART: &str = r#"(name: "bench favourite", class: "precision",
    amp: (a0: 2.0e6, gbw: 3.0e6, fp2: 9.0e6, ro: 70.0, vnoise: 7.0e-9, inoise: 3.0e-15),
    notes: { "gbw": "sheet p. 2, typical" })"#;

/// A workbench on the demo saved as `dir/stage.ron`, with a user library.
fn app_in(dir: &Path) -> App {
    let stage = dir.join("stage.ron");
    std::fs::write(&stage, loopwright::files::load::demo().to_ron()).unwrap();
    let s = loopwright::model::Scenario::load(&stage).unwrap();
    let mut a = App::new(vec![(s, Some(stage))], Theme::new(false, false));
    a.user_parts = Some(dir.join("user"));
    a
}

fn setup(name: &str) -> std::path::PathBuf {
    let d = temp_dir(name);
    std::fs::create_dir_all(d.join("user")).unwrap();
    std::fs::create_dir_all(d.join("parts")).unwrap();
    std::fs::write(d.join("user/fav.ron"), USER_PART).unwrap();
    std::fs::write(
        d.join("parts/local.ron"),
        "[(name: \"board amp\", class: \"fast\", amp: (a0: 5.0e4, gbw: 50.0e6, ro: 30.0, vnoise: 4.0e-9, inoise: 2.0e-12))]",
    )
    .unwrap();
    d
}

#[test]
fn the_amplifier_list_shows_three_groups_and_bad_files_at_80x24() {
    let d = setup("parts-ui-groups");
    std::fs::write(
        d.join("user/0broken.ron"),
        "(name: \"x\",\n  amp: (a0: 1e5, gbw: \"1Q\"))",
    )
    .unwrap();
    let mut a = app_in(&d);
    a.on_key(key(KeyCode::Char('a')));
    assert!(matches!(a.mode, Mode::Parts(_)));
    let text = screen_at(&a, 80, 24);
    let (b, u, p) = (
        text.find("built-in").unwrap(),
        text.find("user library").unwrap(),
        text.find("project (").unwrap(),
    );
    assert!(b < u && u < p, "{text}");
    assert!(
        text.contains("bench favourite") && text.contains("board amp"),
        "{text}"
    );
    // The broken file is listed with its line and column.
    assert!(text.contains("0broken.ron:2:"), "{text}");
    assert!(a.status.contains("could not be read"), "{}", a.status);
}

#[test]
fn typing_narrows_the_list_and_enter_applies_the_match() {
    let d = setup("parts-ui-search");
    let mut a = app_in(&d);
    a.on_key(key(KeyCode::Char('a')));
    type_text(&mut a, "bench");
    let text = screen_at(&a, 80, 24);
    assert!(text.contains("bench favourite"), "{text}");
    assert!(!text.contains("JFET input"), "{text}");
    assert!(text.contains("1 of "), "{text}");
    a.on_key(key(KeyCode::Enter));
    let want = parts_from_ron(USER_PART, None).unwrap().remove(0);
    assert_eq!(a.slot().scenario.amp, want.amp);
    assert!(a.status.contains("bench favourite"), "{}", a.status);
}

#[test]
fn applying_a_part_sets_every_field_and_names_the_changed_ones() {
    let d = setup("parts-ui-apply");
    let mut a = app_in(&d);
    // Give the stage a signal limit the part does not have.
    a.slots[0].scenario.amp.vos = Some(1e-3);
    a.on_key(key(KeyCode::Char('a')));
    type_text(&mut a, "board");
    a.on_key(key(KeyCode::Enter));
    let amp = &a.slot().scenario.amp;
    assert_eq!(amp.vos, None, "every field is set from the part");
    assert_eq!(amp.gbw, 50.0e6);
    // Against assets/demo.ron, 11 fields differ: a0, gbw, fp2, rin, cin, ro,
    // vnoise, vnoise_corner, inoise, inoise_corner (the demo's 0 corners are
    // present, the part has none) and vos. Each is named or counted.
    for f in ["a0", "gbw", "fp2"] {
        assert!(a.status.contains(f), "{f}: {}", a.status);
    }
    let named = a.status.matches(", ").count() + 1;
    let more: usize = a
        .status
        .split(" +")
        .nth(1)
        .map_or(0, |t| t.trim_end_matches(" more").parse().unwrap());
    assert_eq!(named + more, 11, "{}", a.status);
    assert!(
        a.status.chars().count() <= 78,
        "fits 80 columns: {}",
        a.status
    );
    // Applying it again changes nothing, and says so.
    a.on_key(key(KeyCode::Char('a')));
    type_text(&mut a, "board");
    a.on_key(key(KeyCode::Enter));
    assert!(a.status.contains("nothing changed"), "{}", a.status);
    // One undo brings the first amplifier back.
    a.on_key(key(KeyCode::Backspace));
    assert_eq!(a.slot().scenario.amp.vos, Some(1e-3));
}

#[test]
fn saving_the_amplifier_asks_name_and_place_and_never_replaces_unasked() {
    let d = setup("parts-ui-save");
    let mut a = app_in(&d);
    let shift_a = KeyEvent::new(KeyCode::Char('A'), KeyModifiers::SHIFT);
    a.on_key(shift_a);
    assert!(matches!(a.mode, Mode::Prompt(..)), "{:?}", a.mode);
    type_text(&mut a, "my stage amp");
    a.on_key(key(KeyCode::Enter));
    assert!(
        a.status.contains("p = project") && a.status.contains("u = user"),
        "{}",
        a.status
    );
    a.on_key(key(KeyCode::Char('p')));
    let file = project_dir(Some(&d.join("stage.ron"))).join("my-stage-amp.ron");
    let saved = parts_from_ron(&std::fs::read_to_string(&file).unwrap(), None).unwrap();
    assert_eq!(saved[0].amp, a.slot().scenario.amp);
    assert_eq!(saved[0].name, "my stage amp");
    let before = std::fs::read_to_string(&file).unwrap();
    // Again, with a changed amplifier: asked first; any key but y keeps the file.
    a.slots[0].scenario.amp.ro = 77.0;
    a.on_key(shift_a);
    press(&mut a, KeyCode::Backspace, 40);
    type_text(&mut a, "my stage amp");
    a.on_key(key(KeyCode::Enter));
    a.on_key(key(KeyCode::Char('p')));
    assert!(a.status.contains("exists"), "{}", a.status);
    a.on_key(key(KeyCode::Char('n')));
    assert_eq!(
        std::fs::read_to_string(&file).unwrap(),
        before,
        "nothing lost"
    );
    // y replaces it.
    a.on_key(shift_a);
    press(&mut a, KeyCode::Backspace, 40);
    type_text(&mut a, "my stage amp");
    a.on_key(key(KeyCode::Enter));
    a.on_key(key(KeyCode::Char('p')));
    a.on_key(key(KeyCode::Char('y')));
    let saved = parts_from_ron(&std::fs::read_to_string(&file).unwrap(), None).unwrap();
    assert_eq!(saved[0].amp.ro, 77.0);
    // The user library too; the applied part's notes go with unchanged values.
    a.on_key(key(KeyCode::Char('a')));
    type_text(&mut a, "bench");
    a.on_key(key(KeyCode::Enter));
    a.on_key(shift_a);
    press(&mut a, KeyCode::Backspace, 40);
    type_text(&mut a, "copy of fav");
    a.on_key(key(KeyCode::Enter));
    a.on_key(key(KeyCode::Char('u')));
    let copy = d.join("user/copy-of-fav.ron");
    let saved = parts_from_ron(&std::fs::read_to_string(&copy).unwrap(), None).unwrap();
    assert_eq!(saved[0].notes["gbw"], "sheet p. 2, typical");
    assert_eq!(saved[0].class, "precision");
}

#[test]
fn the_changed_fields_fit_the_status_line() {
    use loopwright::ui::app::changed_text;
    assert_eq!(changed_text(&[], 40), "nothing changed");
    assert_eq!(changed_text(&["a0", "gbw"], 40), "changed a0, gbw");
    let many = [
        "a0",
        "gbw",
        "fp2",
        "rin",
        "cin",
        "ro",
        "vnoise",
        "vnoise_corner",
        "inoise",
    ];
    let t = changed_text(&many, 30);
    assert!(t.chars().count() <= 30, "{t}");
    // Every field is either named or counted.
    let named = t.matches(", ").count() + 1;
    let more: usize = t
        .rsplit(" +")
        .next()
        .unwrap()
        .trim_end_matches(" more")
        .parse()
        .unwrap();
    assert_eq!(named + more, many.len(), "{t}");
}

#[test]
fn d_derives_the_amplifier_from_a_figures_file_and_keeps_the_formulas_as_notes() {
    let d = setup("parts-ui-figures");
    let figs = d.join("figs.ron");
    std::fs::write(
        &figs,
        "(part: \"from sheet\", gain_db: 100, unity: \"1M\", phase_margin: 68, ro: 50,\n vnoise: (white: \"10n\"), inoise: (white: \"1p\"))",
    )
    .unwrap();
    let mut a = app_in(&d);
    // `d` opens the datasheet form; `o` fills it from a file, `a` applies.
    a.on_key(key(KeyCode::Char('d')));
    a.on_key(key(KeyCode::Char('o')));
    type_text(&mut a, &figs.display().to_string());
    a.on_key(key(KeyCode::Enter));
    a.on_key(key(KeyCode::Char('a')));
    // Issue 28: 68° at 1 MHz gives fp2 = 2.475 MHz and gbw = 1.0785 MHz.
    let amp = &a.slot().scenario.amp;
    assert!((amp.fp2.unwrap() / 2.475e6 - 1.0).abs() < 1e-3, "{amp:?}");
    assert!((amp.gbw / 1.0785e6 - 1.0).abs() < 1e-4);
    assert!(a.status.contains("from sheet set"), "{}", a.status);
    // Saved as a part, the formulas go along as notes.
    a.on_key(KeyEvent::new(KeyCode::Char('A'), KeyModifiers::SHIFT));
    a.on_key(key(KeyCode::Enter));
    a.on_key(key(KeyCode::Char('u')));
    let saved = parts_from_ron(
        &std::fs::read_to_string(d.join("user/from-sheet.ron")).unwrap(),
        None,
    )
    .unwrap();
    assert!(
        saved[0].notes["fp2"].contains("tan(90° − PM)"),
        "{:?}",
        saved[0].notes
    );
    // A bad figures file leaves the amplifier alone and says where.
    std::fs::write(&figs, "(gain_db: 100, unity: \"1M\",\n phase_margin: 95, ro: 50, vnoise: (white: \"10n\"), inoise: (white: \"1p\"))").unwrap();
    let before = a.slot().scenario.amp.clone();
    a.on_key(key(KeyCode::Char('d')));
    a.on_key(key(KeyCode::Char('o')));
    type_text(&mut a, &figs.display().to_string());
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slot().scenario.amp, before);
    assert!(a.status.contains("figs.ron:2:2:"), "{}", a.status);
    // Applying it anyway is refused; the amplifier stays.
    a.on_key(key(KeyCode::Char('a')));
    assert_eq!(a.slot().scenario.amp, before);
}
