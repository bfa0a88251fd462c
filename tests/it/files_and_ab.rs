//! Saving and opening from the workbench, the archetype library, and the
//! A/B comparison (workbench and `compare`).

use crate::support::cli::{bin, temp_dir};
use crate::support::screen::buffer_text;
use crossterm::event::{KeyCode, KeyEvent, KeyModifiers};
use loopwright::model::scenario::Scenario;
use loopwright::ui::app::{archetypes, write_atomic, App};
use loopwright::ui::theme::Theme;
use loopwright::ui::view::draw;
use ratatui::backend::TestBackend;
use ratatui::Terminal;
use std::path::{Path, PathBuf};

fn key(c: KeyCode) -> KeyEvent {
    KeyEvent::new(c, KeyModifiers::NONE)
}

fn type_text(a: &mut App, text: &str) {
    for c in text.chars() {
        a.on_key(key(KeyCode::Char(c)));
    }
}

fn screen(app: &App) -> String {
    let mut t = Terminal::new(TestBackend::new(100, 30)).unwrap();
    t.draw(|f| draw(f, app)).unwrap();
    buffer_text(t.backend().buffer()).join("\n")
}

fn demo_app(path: Option<PathBuf>) -> App {
    App::new(
        vec![(loopwright::files::load::demo(), path)],
        Theme::new(false, false),
    )
}

fn save_as(a: &mut App, path: &Path) {
    a.on_key(KeyEvent::new(KeyCode::Char('S'), KeyModifiers::SHIFT));
    for _ in 0..200 {
        a.on_key(key(KeyCode::Backspace));
    }
    type_text(a, path.to_str().unwrap());
    a.on_key(key(KeyCode::Enter));
}

#[test]
fn save_as_adds_ron_and_the_file_reloads_equal() {
    let d = temp_dir("saveas");
    let mut a = demo_app(None);
    a.on_key(key(KeyCode::Right)); // rf 10k -> 11k, now modified
    assert!(screen(&a).contains(" edited"));
    save_as(&mut a, &d.join("front-end"));
    let path = d.join("front-end.ron");
    assert!(path.exists(), "{}", a.status);
    assert!(!screen(&a).contains(" edited"));
    assert!(screen(&a).contains("front-end.ron"));
    let back = Scenario::load(&path).unwrap();
    assert_eq!(back, a.slot().scenario);
    // The saved file is the documented shape, loadable by `report`.
    let out = bin().arg("report").arg(&path).output().unwrap();
    assert!(out.status.success());
    // w saves to the same file again.
    a.on_key(key(KeyCode::Right));
    a.on_key(key(KeyCode::Char('s')));
    assert_eq!(Scenario::load(&path).unwrap().stage.rf, Some(12_000.0));
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn failed_saves_keep_the_edits_and_the_old_file() {
    let d = temp_dir("ro");
    let path = d.join("stage.ron");
    let original = loopwright::files::load::demo().to_ron();
    std::fs::write(&path, &original).unwrap();
    let mut a = demo_app(Some(path.clone()));
    a.on_key(key(KeyCode::Right));
    // A path that is a folder.
    let folder = d.join("folder.ron");
    std::fs::create_dir_all(&folder).unwrap();
    save_as(&mut a, &folder);
    assert!(a.status.contains("could not save"), "{}", a.status);
    assert!(a.slot().dirty);
    assert_eq!(a.slot().scenario.stage.rf, Some(11_000.0));
    // A folder that does not exist.
    save_as(&mut a, &d.join("no/such/folder/x.ron"));
    assert!(a.status.contains("could not save"), "{}", a.status);
    // A read-only folder. Root ignores permission bits, so there the folder
    // is also made immutable (chattr +i), which binds root too; where that
    // is not possible either, a place no one may create files in is used.
    let ro = d.join("ro");
    std::fs::create_dir_all(&ro).unwrap();
    let inside = ro.join("stage.ron");
    std::fs::write(&inside, &original).unwrap();
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o555)).unwrap();
    let writable = |dir: &Path| {
        let probe = dir.join("probe");
        let ok = std::fs::File::create(&probe).is_ok();
        let _ = std::fs::remove_file(&probe);
        ok
    };
    let chattr = |flag: &str| {
        std::process::Command::new("chattr")
            .args([flag, ro.to_str().unwrap()])
            .output()
            .map(|o| o.status.success())
            .unwrap_or(false)
    };
    if writable(&ro) {
        chattr("+i");
    }
    let target = if writable(&ro) {
        println!("cannot make a read-only folder here: using /proc instead");
        PathBuf::from("/proc/loopwright-save-test.ron")
    } else {
        inside.clone()
    };
    save_as(&mut a, &target);
    if a.status.contains("overwrite it?") {
        a.on_key(key(KeyCode::Char('y')));
    }
    let read_only_ok = !writable(&ro);
    chattr("-i");
    std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o755)).unwrap();
    assert!(a.status.contains("could not save"), "{}", a.status);
    assert!(a.slot().dirty, "edits kept in memory");
    assert_eq!(a.slot().scenario.stage.rf, Some(11_000.0));
    if read_only_ok {
        // The file in the read-only folder is byte-for-byte unchanged.
        assert_eq!(std::fs::read(&inside).unwrap(), original.as_bytes());
    }
    // The original file is byte-for-byte unchanged.
    assert_eq!(std::fs::read_to_string(&path).unwrap(), original);
    // No temporary files are left behind.
    let leftovers: Vec<_> = std::fs::read_dir(&d)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().contains(".tmp-"))
        .collect();
    assert!(leftovers.is_empty());
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn saving_keeps_the_comment_at_the_top() {
    let d = temp_dir("comment");
    let path = d.join("c.ron");
    let src = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/mic_preamp.ron"
    ))
    .unwrap();
    std::fs::write(&path, &src).unwrap();
    // As the binary does: the file is read once, its text kept for the comments.
    let (scenario, text) = Scenario::read(&path).unwrap();
    let stage = loopwright::ui::app::Opened {
        scenario,
        path: Some(path.clone()),
        text,
    };
    let mut a = App::new(vec![stage], Theme::new(false, false));
    a.on_key(key(KeyCode::Right));
    a.on_key(key(KeyCode::Char('s')));
    let saved = std::fs::read_to_string(&path).unwrap();
    let header: Vec<&str> = src.lines().take_while(|l| l.starts_with("//")).collect();
    assert!(!header.is_empty());
    for l in header {
        assert!(saved.contains(l), "kept {l:?}");
    }
    assert_eq!(Scenario::load(&path).unwrap(), a.slot().scenario);
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn saving_over_a_file_leaves_a_complete_valid_file() {
    let d = temp_dir("over");
    let path = d.join("s.ron");
    std::fs::write(&path, "(broken").unwrap();
    let mut s = loopwright::files::load::demo();
    for i in 0..20 {
        s.stage.rf = Some(1000.0 + i as f64);
        write_atomic(&path, &s.to_ron()).unwrap();
        let back = Scenario::load(&path).unwrap();
        assert_eq!(back, s);
    }
    assert!(write_atomic(&d, "x").is_err());
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn broken_files_report_position_and_keep_the_open_scenario() {
    let d = temp_dir("broken");
    let good = loopwright::files::load::DEMO_RON;
    let cases = [
        ("cut.ron", good[..good.len() / 2].to_string()),
        ("type.ron", good.replace("rg: 1000.0", "rg: \"one k\"")),
        ("variant.ron", good.replace("series: E24", "series: E25")),
    ];
    for (name, text) in &cases {
        let p = d.join(name);
        std::fs::write(&p, text).unwrap();
        // CLI: error with line and column, nothing on stdout.
        let out = bin().arg("report").arg(&p).output().unwrap();
        assert!(!out.status.success());
        assert!(out.stdout.is_empty());
        let err = String::from_utf8_lossy(&out.stderr).to_string();
        let prefix = format!("{}:", p.display());
        let rest = err.split(&prefix).nth(1).unwrap_or_else(|| panic!("{err}"));
        let mut nums = rest.split(':').take(2).map(|n| n.trim().parse::<usize>());
        assert!(
            matches!((nums.next(), nums.next()), (Some(Ok(_)), Some(Ok(_)))),
            "line:col in {err}"
        );
        // Workbench: the open scenario stays and the error is shown.
        let mut a = demo_app(None);
        a.on_key(key(KeyCode::Right));
        a.on_key(key(KeyCode::Char('o')));
        type_text(&mut a, p.to_str().unwrap());
        a.on_key(key(KeyCode::Enter));
        assert_eq!(a.slot().scenario.stage.rf, Some(11_000.0), "{name}");
        assert!(
            a.status.contains(name) && a.status.contains("kept"),
            "{}",
            a.status
        );
        let text = screen(&a);
        assert!(text.contains("kept the open"), "{text}");
    }
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn open_lists_scenarios_and_loads_one() {
    let mut a = demo_app(None);
    a.on_key(key(KeyCode::Char('o')));
    let text = screen(&a);
    assert!(text.contains("Open a scenario"));
    assert!(text.contains("scenarios/"), "{text}");
    let p = concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios/mic_preamp.ron");
    type_text(&mut a, p);
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slot().scenario.title, "Low-noise preamp, gain 101");
    assert!(screen(&a).contains("mic_preamp.ron"));
    // Over unsaved changes it asks first; any key but y keeps the edits.
    a.on_key(key(KeyCode::Right));
    let edited = a.slot().scenario.clone();
    let other = concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios/adc_driver_2n2.ron");
    a.on_key(key(KeyCode::Char('o')));
    type_text(&mut a, other);
    a.on_key(key(KeyCode::Enter));
    assert!(a.status.contains("unsaved changes"), "{}", a.status);
    a.on_key(key(KeyCode::Char('n')));
    assert_eq!(a.slot().scenario, edited);
    a.on_key(key(KeyCode::Char('o')));
    type_text(&mut a, other);
    a.on_key(key(KeyCode::Enter));
    a.on_key(key(KeyCode::Char('y')));
    assert_eq!(a.slot().scenario.title, "ADC driver into 2.2 nF, gain 2");
}

#[test]
fn older_files_without_a_version_still_load() {
    // Files written before the version field existed have none: they load as version 1.
    let s = Scenario::from_ron(loopwright::files::load::DEMO_RON, None).unwrap();
    assert!(!loopwright::files::load::DEMO_RON.contains("version"));
    assert_eq!(s.version, 1);
}

#[test]
fn archetypes_are_valid_and_a_key_applies_them() {
    let list = archetypes();
    assert!(list.len() >= 6, "six archetypes");
    for arch in &list {
        let mut s = loopwright::files::load::demo();
        s.amp = arch.amp.clone();
        assert!(s.validate().is_ok(), "{}", arch.name);
    }
    let text = loopwright::ui::app::ARCHETYPES_RON;
    assert!(text.matches("typical, from memory").count() >= list.len());
    let mut a = demo_app(None);
    a.on_key(key(KeyCode::Char('a')));
    let text = screen(&a);
    for arch in &list {
        assert!(text.contains(&arch.name), "picker lists {}", arch.name);
    }
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slot().scenario.amp, list[0].amp);
    assert!(a.status.contains(&list[0].name));
    a.on_key(key(KeyCode::Char('a')));
    a.on_key(key(KeyCode::Down));
    a.on_key(key(KeyCode::Enter));
    assert_eq!(a.slot().scenario.amp, list[1].amp);
    // Esc leaves the amplifier alone; its parameters stay editable.
    a.on_key(key(KeyCode::Char('a')));
    a.on_key(key(KeyCode::Down));
    a.on_key(key(KeyCode::Esc));
    assert_eq!(a.slot().scenario.amp, list[1].amp);
    // (Stepping an archetype's gbw along 1-2-5: tests/it/workbench_keys.rs.)
}

#[test]
fn two_candidates_side_by_side() {
    let mut a = demo_app(None);
    a.on_key(key(KeyCode::Char('c')));
    assert_eq!(a.slots.len(), 2);
    a.on_key(key(KeyCode::Tab));
    assert_eq!(a.active, 1);
    a.on_key(key(KeyCode::Right)); // B: rf 11k
    let text = screen(&a);
    // The figures rows (the cursor readout lines read "A @ …").
    let row = |p: &str| {
        text.lines()
            .find(|l| l.starts_with(p) && !l.contains(" @ "))
            .unwrap_or_else(|| panic!("no {p} row:\n{text}"))
            .to_string()
    };
    // The finite-gain loop, textbook: G = (1 + rf/rg)/(1 + 1/(a0·β·k)),
    // β = rg/(rg + rf), with ro driving the load ∥ (rf + rg) through the
    // divider k = Z/(Z + ro) (voltage divider). rin (2 MΩ) and the 50 Ω
    // source carry no DC current worth counting (below 1e-6 relative).
    let s = &a.slots[0].scenario;
    let closed = |rf: f64| {
        let (rg, am) = (s.stage.rg.unwrap(), &s.amp);
        let z = 1.0 / (1.0 / s.load.r.unwrap() + 1.0 / (rf + rg));
        let loop_gain = am.a0 * rg / (rg + rf) * z / (z + am.ro);
        (1.0 + rf / rg) / (1.0 + 1.0 / loop_gain)
    };
    let rf = s.stage.rf.unwrap();
    let rf_b = a.slots[1].scenario.stage.rf.unwrap();
    let (ga, gb) = (closed(rf), closed(rf_b));
    // The first figure of each row, shown to 4 decimals: within 6e-5 (half
    // a shown digit, plus the neglected terms).
    let first = |p: &str| -> f64 {
        let r = row(p);
        r[2..].split_whitespace().next().unwrap().parse().unwrap()
    };
    assert!(
        (first("A ") - ga).abs() < 6e-5,
        "A {} vs {ga}\n{text}",
        first("A ")
    );
    assert!(
        (first("B ") - gb).abs() < 6e-5,
        "B {} vs {gb}\n{text}",
        first("B ")
    );
    assert!((first("Δ ") - (gb - ga)).abs() < 1.2e-4, "{text}");
    // rf differs, and is the selected row (its pointer follows the mark).
    assert!(text.contains("≠▸rf"), "differing parameter marked:\n{text}");
    assert!(
        text.contains("A ─── B ···"),
        "legend tells the traces apart"
    );
}

#[test]
fn opening_two_files_and_compare_command() {
    let a = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/buffer_rings_10n.ron"
    );
    let b = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/line_driver_cable.ron"
    );
    let out = bin().args(["compare", a, b]).output().unwrap();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("Unity buffer on 10 nF"));
    assert!(text.contains("Line driver into 100 pF"));
    assert!(text.contains("B − A"));
    assert!(text.contains("stage.topology"), "{text}");
    let out = bin().args(["compare", a, b, "--json"]).output().unwrap();
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["a"]["phase_margin_deg"].is_number());
    assert!(v["b"]["phase_margin_deg"].is_number());
    let figs = v["differences"]["figures"].as_array().unwrap();
    let pm = figs
        .iter()
        .find(|f| f["key"] == "phase_margin_deg")
        .unwrap();
    let want = pm["b"].as_f64().unwrap() - pm["a"].as_f64().unwrap();
    assert!((pm["delta"].as_f64().unwrap() - want).abs() < 1e-9);
    let params = v["differences"]["parameters"].as_array().unwrap();
    assert!(params.iter().any(|p| p["field"] == "stage.riso"));
    // A bad second file fails cleanly.
    let out = bin().args(["compare", a, "Cargo.toml"]).output().unwrap();
    assert!(!out.status.success() && out.stdout.is_empty());
}

#[test]
fn save_as_over_an_existing_file_asks_first() {
    let d = temp_dir("ask-over");
    let other = d.join("other.ron");
    std::fs::write(&other, "// someone else's stage\n").unwrap();
    let mut a = demo_app(None);
    a.on_key(key(KeyCode::Right));
    save_as(&mut a, &other);
    assert!(a.status.contains("exists: overwrite it?"), "{}", a.status);
    a.on_key(key(KeyCode::Char('n')));
    assert_eq!(
        std::fs::read_to_string(&other).unwrap(),
        "// someone else's stage\n"
    );
    assert!(a.slot().dirty);
    save_as(&mut a, &other);
    a.on_key(key(KeyCode::Char('y')));
    assert_eq!(Scenario::load(&other).unwrap(), a.slot().scenario);
    assert!(!a.slot().dirty, "{}", a.status);
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn a_file_changed_on_disk_since_loading_is_not_overwritten_silently() {
    let d = temp_dir("ask-changed");
    let p = d.join("s.ron");
    std::fs::write(&p, loopwright::files::load::DEMO_RON).unwrap();
    let mut a = App::new(
        vec![(Scenario::load(&p).unwrap(), Some(p.clone()))],
        Theme::new(false, false),
    );
    a.on_key(key(KeyCode::Right));
    // Another program rewrites the file (a different length, so the
    // change shows whatever the clock's resolution).
    let theirs =
        loopwright::files::load::DEMO_RON.replace("gain 11\"", "gain 11, edited elsewhere\"");
    std::fs::write(&p, &theirs).unwrap();
    a.on_key(key(KeyCode::Char('s')));
    assert!(
        a.status.contains("changed by another program"),
        "{}",
        a.status
    );
    a.on_key(key(KeyCode::Esc));
    assert_eq!(std::fs::read_to_string(&p).unwrap(), theirs);
    a.on_key(key(KeyCode::Char('s')));
    a.on_key(key(KeyCode::Char('y')));
    assert_eq!(Scenario::load(&p).unwrap(), a.slot().scenario);
    // Saved: the next save does not ask.
    a.on_key(key(KeyCode::Right));
    a.on_key(key(KeyCode::Char('s')));
    assert!(a.status.starts_with("saved"), "{}", a.status);
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn a_save_that_would_drop_comments_asks_first() {
    let d = temp_dir("ask-comments");
    let p = d.join("s.ron");
    let text = loopwright::files::load::DEMO_RON.replace("riso: 0.0,", "riso: 0.0, /* keep */");
    std::fs::write(&p, &text).unwrap();
    let mut a = App::new(
        vec![(Scenario::load(&p).unwrap(), Some(p.clone()))],
        Theme::new(false, false),
    );
    // A number only: saved without a question, comment kept.
    a.on_key(key(KeyCode::Right));
    a.on_key(key(KeyCode::Char('s')));
    assert!(a.status.starts_with("saved"), "{}", a.status);
    assert!(std::fs::read_to_string(&p).unwrap().contains("/* keep */"));
    // Typing `none` for cf removes a field: deleted in place, no question,
    // the comment kept.
    a.selected = loopwright::model::params::param("stage.cf").unwrap();
    a.on_key(key(KeyCode::Enter));
    for _ in 0..20 {
        a.on_key(key(KeyCode::Backspace));
    }
    type_text(&mut a, "none");
    a.on_key(key(KeyCode::Enter));
    assert!(a.slot().dirty, "{}", a.status);
    a.on_key(key(KeyCode::Char('s')));
    assert!(a.status.starts_with("saved"), "{}", a.status);
    let saved = std::fs::read_to_string(&p).unwrap();
    assert!(
        saved.contains("/* keep */") && !saved.contains("cf:"),
        "{saved}"
    );
    assert_eq!(Scenario::load(&p).unwrap(), a.slot().scenario);
    // A block the file writes empty takes no field in place: the save asks
    // before writing the file whole.
    let empty = text.replace("    temp_c:", "    spread: (),\n    temp_c:");
    std::fs::write(&p, &empty).unwrap();
    let mut a = App::new(
        vec![(Scenario::load(&p).unwrap(), Some(p.clone()))],
        Theme::new(false, false),
    );
    a.selected = loopwright::model::params::param("spread.cap_tol").unwrap();
    a.on_key(key(KeyCode::Right));
    assert!(a.slot().dirty, "{}", a.status);
    a.on_key(key(KeyCode::Char('s')));
    assert!(
        a.status.contains("only its leading comments"),
        "{}",
        a.status
    );
    a.on_key(key(KeyCode::Char('y')));
    assert!(a.status.starts_with("saved"), "{}", a.status);
    assert_eq!(Scenario::load(&p).unwrap(), a.slot().scenario);
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn opening_a_fifo_in_the_workbench_is_refused_without_blocking() {
    let d = temp_dir("open-fifo");
    let p = d.join("p.ron");
    assert!(std::process::Command::new("mkfifo")
        .arg(&p)
        .status()
        .unwrap()
        .success());
    let mut a = demo_app(None);
    a.on_key(key(KeyCode::Char('o')));
    type_text(&mut a, p.to_str().unwrap());
    a.on_key(key(KeyCode::Enter));
    assert!(a.status.contains("not a regular file"), "{}", a.status);
    assert!(a.status.contains("p.ron"), "{}", a.status);
    assert_eq!(a.slot().scenario, loopwright::files::load::demo());
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn a_read_only_file_is_not_overwritten_without_asking() {
    use std::os::unix::fs::PermissionsExt;
    let d = temp_dir("ask-readonly");
    let p = d.join("s.ron");
    std::fs::write(&p, loopwright::files::load::DEMO_RON).unwrap();
    // chmod 444: no write bit for anyone (POSIX mode bits).
    std::fs::set_permissions(&p, std::fs::Permissions::from_mode(0o444)).unwrap();
    let mut a = App::new(
        vec![(Scenario::load(&p).unwrap(), Some(p.clone()))],
        Theme::new(false, false),
    );
    a.on_key(key(KeyCode::Right));
    a.on_key(key(KeyCode::Char('s')));
    assert!(a.status.contains("read-only"), "{}", a.status);
    a.on_key(key(KeyCode::Char('n')));
    assert_eq!(
        std::fs::read_to_string(&p).unwrap(),
        loopwright::files::load::DEMO_RON
    );
    assert!(a.slot().dirty);
    a.on_key(key(KeyCode::Char('s')));
    a.on_key(key(KeyCode::Char('y')));
    assert_eq!(Scenario::load(&p).unwrap(), a.slot().scenario);
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn save_as_to_a_folder_is_refused_not_a_hidden_file() {
    let d = temp_dir("saveas-dir");
    let mut a = demo_app(None);
    a.on_key(key(KeyCode::Right));
    for typed in [format!("{}/", d.display()), d.display().to_string()] {
        save_as(&mut a, Path::new(&typed));
        assert!(a.status.contains("is a folder"), "{typed}: {}", a.status);
        assert!(a.status.contains("could not save"), "{typed}: {}", a.status);
        assert!(!d.join(".ron").exists(), "{typed}");
        assert!(a.slot().dirty);
    }
    assert_eq!(std::fs::read_dir(&d).unwrap().count(), 0);
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn rescue_copies_are_numbered_and_offered_at_the_next_start() {
    use loopwright::files::storage::{free_rescue_path, rescue_files, rescue_path};
    let d = temp_dir("rescue-numbers");
    let p = d.join("s.ron");
    std::fs::write(&p, loopwright::files::load::DEMO_RON).unwrap();
    let base = rescue_path(Some(&p), "A");
    // Three rescues in a row: none replaces an earlier one.
    let mut written = Vec::new();
    for i in 0..3 {
        let r = free_rescue_path(&base);
        assert!(!r.exists(), "{}", r.display());
        std::fs::write(&r, format!("// rescue {i}\n")).unwrap();
        written.push(r);
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
    assert_eq!(written[0], base);
    for (i, r) in written.iter().enumerate() {
        assert_eq!(
            std::fs::read_to_string(r).unwrap(),
            format!("// rescue {i}\n")
        );
    }
    // Found newest first, and offered when the stage is opened again;
    // `o` lists them first.
    let found = rescue_files(&base);
    assert_eq!(found, written.iter().rev().cloned().collect::<Vec<_>>());
    let mut a = App::new(
        vec![(Scenario::load(&p).unwrap(), Some(p.clone()))],
        Theme::new(false, false),
    );
    assert!(a.offer_rescues());
    for r in &written {
        assert!(a.status.contains(&r.display().to_string()), "{}", a.status);
    }
    a.on_key(key(KeyCode::Char('o')));
    match &a.mode {
        loopwright::ui::app::Mode::Open { files, .. } => {
            assert_eq!(&files[..3], &found[..]);
        }
        m => panic!("{m:?}"),
    }
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn archetype_numbers_are_plainly_generic_one_two_five_values() {
    // Issue 28: the built-in archetypes must not sit near any one part
    // family's headline figures; every number is 1, 2 or 5 × 10^n (the
    // 1-2-5 steps, common practice for round model values).
    let one_two_five = |x: f64| {
        let m = x / 10f64.powf(x.log10().floor());
        [1.0, 2.0, 5.0, 10.0].iter().any(|k| (m - k).abs() < 1e-9)
    };
    for arch in archetypes() {
        let a = &arch.amp;
        let values = [
            Some(a.a0),
            Some(a.gbw),
            a.fp2,
            a.rin,
            a.cin,
            Some(a.ro),
            Some(a.vnoise),
            a.vnoise_corner,
            Some(a.inoise),
            a.inoise_corner,
            a.vos,
            a.vos_drift,
            a.ib,
            a.ios,
            a.slew,
            a.swing_neg,
            a.swing_pos,
            a.cm_neg.map(f64::abs),
            a.cm_pos.map(f64::abs),
            a.iout,
        ];
        for v in values.into_iter().flatten().filter(|v| *v != 0.0) {
            assert!(one_two_five(v), "{}: {v} is not a 1-2-5 value", arch.name);
        }
    }
}

/// A percentage reads in plain digits wherever a parameter's value is
/// written (compare's "Parameters that differ", the pane's edit text):
/// a tolerance of 0.001 is "0.1%" (not "100m%"), and the text reads back.
#[test]
fn a_tenth_of_a_percent_reads_as_0_1_percent() {
    let mut s = loopwright::files::load::demo();
    let p = loopwright::model::params::param("stage.tolerance").unwrap();
    p.set(&mut s, Some(0.001));
    assert_eq!(p.value_text(&s), "0.1%");
    let mut t = s.clone();
    p.set(&mut t, Some(0.01));
    let d = s.differences(&t);
    let row = d.iter().find(|r| r.0 == "stage.tolerance").unwrap();
    assert_eq!((row.1.as_str(), row.2.as_str()), ("0.1%", "1%"));
    // The text the pane offers reads back as the same value.
    let mut u = t.clone();
    p.apply_text(&mut u, &p.edit_text(&s)).unwrap();
    assert_eq!(u.stage.tolerance, 0.001);
}
