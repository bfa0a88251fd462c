//! The datasheet form (`d`): one row per figure of the datasheet-figures
//! format, typed as the pane's values are; the derived amplifier beside
//! it; `a` applies it like a part, `A` saves it as one, Esc leaves the
//! stage as it was. The derivation itself is checked in `datasheet.rs`;
//! here, that the form feeds it and reports it.

use crate::support::cli::temp_dir;
use crate::support::keys::{key, press, screen_at, type_text};
use crossterm::event::{KeyCode, KeyEvent, KeyModifiers};
use loopwright::files::parts::parts_from_ron;
use loopwright::ui::app::{sheet_rows, App, Mode, SheetForm, StatusKind};
use loopwright::ui::theme::Theme;
use std::path::Path;

/// A workbench on the demo saved as `dir/stage.ron`, with a user library.
fn app_in(dir: &Path, ascii: bool) -> App {
    std::fs::create_dir_all(dir.join("user")).unwrap();
    let stage = dir.join("stage.ron");
    std::fs::write(&stage, loopwright::files::load::demo().to_ron()).unwrap();
    let s = loopwright::model::Scenario::load(&stage).unwrap();
    let mut a = App::new(vec![(s, Some(stage))], Theme::new(false, ascii));
    a.user_parts = Some(dir.join("user"));
    a
}

/// The open form.
fn form(a: &App) -> &SheetForm {
    match &a.mode {
        Mode::Sheet(f) => f,
        other => panic!("the form is not open: {other:?}"),
    }
}

/// Select the row of a figure (by its key in the figures file) and type
/// a value into it, as a user would: Home, ↓ to the row, the text, Enter.
fn fill(a: &mut App, figure: &str, text: &str) {
    let i = sheet_rows().iter().position(|r| r.key == figure).unwrap();
    a.on_key(key(KeyCode::Home));
    press(a, KeyCode::Down, i);
    a.on_key(key(KeyCode::Enter));
    press(a, KeyCode::Backspace, 1);
    type_text(a, text);
    a.on_key(key(KeyCode::Enter));
}

/// The check figures: 100 dB, f_u = 1 MHz with 68°, ro 50 Ω,
/// white noise densities.
fn fill_example(a: &mut App) {
    for (figure, text) in [
        ("gain_db", "100"),
        ("unity", "1M"),
        ("phase_margin", "68"),
        ("ro", "50"),
        ("vnoise.white", "10n"),
        ("inoise.white", "1p"),
    ] {
        fill(a, figure, text);
    }
}

#[test]
fn typing_a_value_fills_its_row_and_the_derived_amplifier_follows() {
    let d = temp_dir("sheet-type");
    let mut a = app_in(&d, false);
    a.on_key(key(KeyCode::Char('d')));
    fill(&mut a, "gain_db", "100");
    assert_eq!(form(&a).values.get("gain_db"), Some(&100.0));
    assert!(a.status.contains("gain_db"), "{}", a.status);
    // Not yet enough for an amplifier: the missing figure is named.
    let text = screen_at(&a, 80, 24);
    assert!(text.contains("no amplifier from these figures"), "{text}");
    assert!(text.contains("gbw: missing"), "{text}");
    fill_example(&mut a);
    let text = screen_at(&a, 80, 24);
    assert!(text.contains("100 dB"), "{text}");
    // a0 = 10^(100/20) = 100 000 (textbook dB definition), with its formula.
    assert!(text.contains("a0 = 100 k"), "{text}");
    assert!(text.contains("10^(dB/20)"), "{text}");
    // fp2 = 1 MHz/tan 22° = 2.475 MHz (issue 28's check).
    let fp2 = 1e6 / 22f64.to_radians().tan();
    assert!((fp2 / 2.475e6 - 1.0).abs() < 1e-3);
    let d = form(&a).derivation().unwrap();
    assert!((d.amp.fp2.unwrap() / fp2 - 1.0).abs() < 1e-12);
    // A digit on a number row starts the entry with it (the selection
    // stays on the row just filled).
    fill(&mut a, "rin", "1M");
    assert_eq!(form(&a).values.get("rin"), Some(&1e6));
    type_text(&mut a, "12M");
    a.on_key(key(KeyCode::Enter));
    assert_eq!(form(&a).values.get("rin"), Some(&12e6));
}

#[test]
fn a_refused_value_names_the_row_and_the_text_and_changes_nothing() {
    let d = temp_dir("sheet-refuse");
    let mut a = app_in(&d, false);
    a.on_key(key(KeyCode::Char('d')));
    fill(&mut a, "phase_margin", "60");
    fill(&mut a, "phase_margin", "6x8");
    assert_eq!(a.status_kind, StatusKind::Error);
    assert!(
        a.status.contains("phase margin (phase_margin)") && a.status.contains("6x8"),
        "{}",
        a.status
    );
    assert!(a.status.contains("value unchanged"), "{}", a.status);
    assert_eq!(form(&a).values.get("phase_margin"), Some(&60.0));
    // A row that is an amp field takes the pane's range: rin > 0.
    fill(&mut a, "rin", "-5");
    assert!(
        a.status.contains("rin") && a.status.contains("-5"),
        "{}",
        a.status
    );
    assert_eq!(form(&a).values.get("rin"), None);
    // A spot frequency must be above 0.
    fill(&mut a, "vnoise.f1", "0");
    assert!(a.status.contains("vnoise.f1"), "{}", a.status);
    // The message wraps inside the form at 80 columns: its end shows.
    let text = screen_at(&a, 80, 24);
    assert!(text.contains("(value unchanged)"), "{text}");
}

#[test]
fn delete_on_a_choice_row_says_it_is_a_choice_and_keeps_it() {
    let d = temp_dir("sheet-choice");
    let mut a = app_in(&d, false);
    a.on_key(key(KeyCode::Char('d')));
    let i = sheet_rows().iter().position(|r| r.key == "take").unwrap();
    a.on_key(key(KeyCode::Home));
    press(&mut a, KeyCode::Down, i);
    a.on_key(key(KeyCode::Right));
    let before = format!("{:?}", form(&a).take);
    a.on_key(key(KeyCode::Delete));
    assert_eq!(format!("{:?}", form(&a).take), before);
    assert!(!a.status.contains("cleared"), "{}", a.status);
    assert!(a.status.contains("choice"), "{}", a.status);
}

#[test]
fn figures_that_cannot_be_reconciled_are_said_and_not_applied() {
    let d = temp_dir("sheet-margin");
    let mut a = app_in(&d, false);
    let before = a.slot().scenario.amp.clone();
    a.on_key(key(KeyCode::Char('d')));
    fill_example(&mut a);
    // 95°: more than the single pole's 90° (README, issue 28).
    fill(&mut a, "phase_margin", "95");
    let text = screen_at(&a, 80, 24);
    assert!(text.contains("phase_margin: 95° is more than"), "{text}");
    a.on_key(key(KeyCode::Char('a')));
    assert!(
        a.status.starts_with("not applied: phase_margin"),
        "{}",
        a.status
    );
    assert!(matches!(a.mode, Mode::Sheet(_)), "the form stays open");
    assert_eq!(a.slot().scenario.amp, before);
    // Half a test circuit is named too.
    fill(&mut a, "phase_margin", "68");
    fill(&mut a, "zout.ohms", "0.5");
    a.on_key(key(KeyCode::Char('a')));
    assert!(a.status.contains("zout.at"), "{}", a.status);
    assert_eq!(a.slot().scenario.amp, before);
}

#[test]
fn applying_sets_the_amplifier_says_what_changed_and_undoes_in_one() {
    let d = temp_dir("sheet-apply");
    let mut a = app_in(&d, false);
    let before = a.slot().scenario.amp.clone();
    a.on_key(key(KeyCode::Char('d')));
    fill_example(&mut a);
    a.on_key(key(KeyCode::Char('a')));
    assert_eq!(a.mode, Mode::Normal);
    let amp = &a.slot().scenario.amp;
    // gbw = f_u·√(1 + (f_u/fp2)²) = f_u/sin 68° = 1.0785 MHz (issue 28).
    assert!((amp.gbw / (1e6 / 68f64.to_radians().sin()) - 1.0).abs() < 1e-9);
    assert!((amp.gbw / 1.0785e6 - 1.0).abs() < 1e-4);
    assert_eq!(amp.ro, 50.0);
    assert!(a.status.contains("from datasheet set"), "{}", a.status);
    assert!(
        a.status.contains("changed") && a.status.contains("gbw"),
        "{}",
        a.status
    );
    a.on_key(key(KeyCode::Backspace));
    assert_eq!(a.slot().scenario.amp, before);
}

#[test]
fn esc_leaves_the_stage_unchanged_and_d_reopens_the_figures_typed() {
    let d = temp_dir("sheet-esc");
    let mut a = app_in(&d, false);
    let before = a.slot().scenario.clone();
    a.on_key(key(KeyCode::Char('d')));
    fill_example(&mut a);
    // Esc inside an entry drops the entry only.
    fill(&mut a, "ro", "");
    a.on_key(key(KeyCode::Enter));
    type_text(&mut a, "99");
    a.on_key(key(KeyCode::Esc));
    assert!(matches!(a.mode, Mode::Sheet(_)));
    assert_eq!(
        form(&a).values.get("ro"),
        None,
        "cleared by the empty entry"
    );
    a.on_key(key(KeyCode::Esc));
    assert_eq!(a.mode, Mode::Normal);
    assert_eq!(a.slot().scenario, before);
    assert!(!a.slot().dirty);
    a.on_key(key(KeyCode::Char('d')));
    assert_eq!(form(&a).values.get("unity"), Some(&1e6));
}

#[test]
fn shift_a_saves_the_derived_amplifier_as_a_part_never_replacing_unasked() {
    let d = temp_dir("sheet-save");
    let mut a = app_in(&d, false);
    let shift_a = KeyEvent::new(KeyCode::Char('A'), KeyModifiers::SHIFT);
    a.on_key(key(KeyCode::Char('d')));
    fill_example(&mut a);
    fill(&mut a, "part", "bench sheet");
    a.on_key(shift_a);
    a.on_key(key(KeyCode::Enter));
    a.on_key(key(KeyCode::Char('u')));
    let file = d.join("user/bench-sheet.ron");
    let saved = parts_from_ron(&std::fs::read_to_string(&file).unwrap(), None).unwrap();
    let derived = {
        a.on_key(key(KeyCode::Char('d')));
        form(&a).derivation().unwrap()
    };
    assert_eq!(saved[0].amp, derived.amp);
    assert!(
        saved[0].notes["fp2"].contains("tan(90° − PM)"),
        "{:?}",
        saved[0].notes
    );
    // The stage's own amplifier was not touched by saving.
    assert_ne!(a.slot().scenario.amp, derived.amp);
    // Again, with another figure: asked first; n keeps the file.
    let kept = std::fs::read_to_string(&file).unwrap();
    fill(&mut a, "ro", "70");
    a.on_key(shift_a);
    a.on_key(key(KeyCode::Enter));
    a.on_key(key(KeyCode::Char('u')));
    assert!(a.status.contains("exists"), "{}", a.status);
    a.on_key(key(KeyCode::Char('n')));
    assert_eq!(std::fs::read_to_string(&file).unwrap(), kept);
}

#[test]
fn the_form_fits_80x24_and_120x40_in_utf8_and_ascii() {
    for ascii in [false, true] {
        let d = temp_dir(&format!("sheet-fit-{ascii}"));
        let mut a = app_in(&d, ascii);
        a.on_key(key(KeyCode::Char('d')));
        fill_example(&mut a);
        for (w, h) in [(80, 24), (120, 40)] {
            let text = screen_at(&a, w, h);
            // The last row typed is in view, the derived heading shows,
            // and the keys line is whole.
            assert!(text.contains("white level"), "{w}x{h}:\n{text}");
            assert!(text.contains("the amplifier, live (f_u given)"), "{text}");
            assert!(text.contains("a applies") && text.contains("Esc"), "{text}");
            if ascii {
                assert!(text.is_ascii(), "{w}x{h} --ascii:\n{text}");
            } else {
                assert!(text.contains("V/√Hz"), "{text}");
            }
        }
    }
}

#[test]
fn the_test_circuit_rows_give_ro_from_the_closed_loop_output_impedance() {
    let d = temp_dir("sheet-zout");
    let mut a = app_in(&d, false);
    a.on_key(key(KeyCode::Char('d')));
    fill_example(&mut a);
    // Issue 28's check: a0 = 1e5, |A| = 70 dB at 800 Hz (one pole:
    // |A| = a0/√(1 + (f/fp1)²), so fp1 = f/√((a0/|A|)² − 1), gbw = a0·fp1),
    // 0.5 Ω at 800 Hz in a non-inverting gain of 10 → ro = 158.1 Ω.
    let a_mag = 10f64.powf(70.0 / 20.0);
    let gbw = 1e5 * 800.0 / ((1e5 / a_mag).powi(2) - 1.0).sqrt();
    for (figure, text) in [
        ("unity", ""),
        ("phase_margin", ""),
        ("ro", ""),
        ("gbw", &format!("{gbw:e}")),
        ("zout.ohms", "0.5"),
        ("zout.at", "800"),
        ("zout.gain", "10"),
    ] {
        fill(&mut a, figure, text);
    }
    let ro = form(&a).derivation().unwrap().amp.ro;
    assert!((ro - 158.1).abs() < 0.05, "{ro}");
    // An inverting gain of −9 has the same β = 1/(1 + 9) = 1/10: the same ro.
    fill(&mut a, "zout.gain", "9");
    let i = sheet_rows()
        .iter()
        .position(|r| r.key == "zout.circuit")
        .unwrap();
    a.on_key(key(KeyCode::Home));
    press(&mut a, KeyCode::Down, i);
    a.on_key(key(KeyCode::Right));
    assert!(form(&a).inverting);
    let ro9 = form(&a).derivation().unwrap().amp.ro;
    assert!((ro9 / ro - 1.0).abs() < 1e-12, "{ro9} vs {ro}");
}

/// The rejection rows fill the amplifier's CMRR and PSRR as `loopwright
/// amp` does: the typical figure, or with "copy figures" at maximum (the
/// worst case) the minimum (common practice: rejection is printed as
/// min/typ, its worst case the lowest).
#[test]
fn the_rejection_rows_give_the_amplifiers_cmrr_and_psrr() {
    let d = temp_dir("sheet-rejection");
    let mut a = app_in(&d, false);
    a.on_key(key(KeyCode::Char('d')));
    fill_example(&mut a);
    fill(&mut a, "cmrr.min", "80");
    fill(&mut a, "cmrr.typ", "95");
    fill(&mut a, "cmrr.corner", "2k");
    fill(&mut a, "psrr.min", "86");
    let amp = form(&a).derivation().unwrap().amp;
    assert_eq!(amp.cmrr_db, Some(95.0));
    assert_eq!(amp.cmrr_corner, Some(2000.0));
    assert_eq!(amp.psrr_db, Some(86.0));
    // "copy figures" at maximum: the worst case, the minimum.
    let i = sheet_rows().iter().position(|r| r.key == "take").unwrap();
    a.on_key(key(KeyCode::Home));
    press(&mut a, KeyCode::Down, i);
    a.on_key(key(KeyCode::Right));
    let amp = form(&a).derivation().unwrap().amp;
    assert_eq!(amp.cmrr_db, Some(80.0));
    // The pane's range refuses a rejection it would refuse.
    fill(&mut a, "psrr.typ", "300");
    assert_eq!(a.status_kind, StatusKind::Error);
    assert!(a.status.contains("psrr"), "{}", a.status);
    assert_eq!(form(&a).values.get("psrr.typ"), None);
}
