//! The amplifier library: part files (one part or a list, with notes),
//! the three places they are found, bad files reported at
//! file:line:column without stopping anything, and saving that never
//! replaces a file unasked.

use crate::support::cli::{bin, temp_dir};
use loopwright::files::parts::{parts_from_ron, save_part, Library, USER_DIR_VAR};
use loopwright::model::part::{Origin, Part};

const ONE: &str = r#"// an invented part
(
    name: "quiet one",
    class: "low noise",
    amp: (a0: 1.0e6, gbw: 10.0e6, ro: 50.0, vnoise: 3.0e-9, inoise: 1.0e-12),
    notes: { "gbw": "sheet p. 4, typical, 25 °C", "vnoise": "p. 5 at 1 kHz" },
)
"#;

const LIST: &str = r#"[
    (name: "first", class: "fast", amp: (a0: 1.0e4, gbw: 100.0e6, ro: 20.0, vnoise: 5.0e-9, inoise: 2.0e-12)),
    (name: "second", class: "precision",
     amp: (a0: 1.0e6, gbw: 1.0e6, ro: 100.0, vnoise: 20.0e-9, inoise: 1.0e-15)),
]
"#;

fn run_parts(user: &std::path::Path, args: &[&str]) -> (bool, String, String) {
    let out = bin()
        .env(USER_DIR_VAR, user)
        .args(["parts"])
        .args(args)
        .output()
        .unwrap();
    (
        out.status.success(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn a_part_file_holds_one_part_or_a_list_with_notes() {
    let one = parts_from_ron(ONE, None).unwrap();
    assert_eq!(one.len(), 1);
    assert_eq!(one[0].name, "quiet one");
    assert_eq!(one[0].amp.gbw, 10.0e6);
    assert_eq!(one[0].notes["gbw"], "sheet p. 4, typical, 25 °C");
    let list = parts_from_ron(LIST, None).unwrap();
    assert_eq!(
        list.iter().map(|p| p.name.as_str()).collect::<Vec<_>>(),
        ["first", "second"]
    );
}

#[test]
fn bad_part_files_are_placed_at_line_and_column() {
    // An unknown note key, at its place.
    let bad = ONE.replace("\"vnoise\": \"p. 5", "\"colour\": \"p. 5");
    let e = parts_from_ron(&bad, Some("x.ron")).unwrap_err();
    let line6 = bad.lines().nth(5).unwrap();
    let col = line6[..line6.find("\"colour\"").unwrap()].chars().count() + 1;
    assert_eq!((e.line, e.col), (Some(6), Some(col)), "{e}");
    // A value out of range in the second part of a list: its own line.
    let bad = LIST.replace("gbw: 1.0e6", "gbw: -1.0");
    let e = parts_from_ron(&bad, Some("x.ron")).unwrap_err();
    assert_eq!(e.line, Some(4), "{e}");
    assert_eq!(e.field.as_deref(), Some("amp.gbw"), "{e}");
    // A syntax error.
    let e = parts_from_ron("(name: \"x\", amp: (a0: 1e5,", Some("x.ron")).unwrap_err();
    assert_eq!(e.line, Some(1), "{e}");
}

#[test]
fn parts_lists_three_groups_and_a_bad_file_does_not_stop_the_rest() {
    let d = temp_dir("parts-list");
    let user = d.join("user");
    let project = d.join("proj");
    std::fs::create_dir_all(&user).unwrap();
    std::fs::create_dir_all(project.join("parts")).unwrap();
    std::fs::write(user.join("a.ron"), ONE).unwrap();
    std::fs::write(
        user.join("0bad.ron"),
        "(name: \"broken\",\n  amp: (a0: 1e5, gbw: \"1Q\"))",
    )
    .unwrap();
    std::fs::write(project.join("parts/list.ron"), LIST).unwrap();
    let stage = project.join("stage.ron");
    let (ok, out, err) = run_parts(&user, &["--stage", stage.to_str().unwrap()]);
    assert!(ok, "{err}");
    let built = out.find("built-in").unwrap();
    let usr = out.find("user library").unwrap();
    let proj = out.find("project").unwrap();
    assert!(built < usr && usr < proj, "{out}");
    assert!(out[..usr].contains("JFET input"), "{out}");
    assert!(out[usr..proj].contains("quiet one"), "{out}");
    assert!(
        out[proj..].contains("first") && out[proj..].contains("second"),
        "{out}"
    );
    // The broken file is listed with its place, the others are still read.
    let b = user.join("0bad.ron").display().to_string();
    assert!(out[usr..proj].contains(&format!("! {b}:2:")), "{out}");
}

#[test]
fn parts_show_prints_the_values_with_their_notes() {
    let d = temp_dir("parts-show");
    std::fs::write(d.join("a.ron"), ONE).unwrap();
    let (ok, out, err) = run_parts(&d, &["show", "Quiet One"]);
    assert!(ok, "{err}");
    let gbw = out
        .lines()
        .find(|l| l.trim_start().starts_with("gbw:"))
        .unwrap();
    assert!(gbw.contains("sheet p. 4, typical, 25 °C"), "{out}");
    assert!(out.contains("user library"), "{out}");
    let (ok, _, err) = run_parts(&d, &["show", "nothing like it"]);
    assert!(!ok && err.contains("no part named"), "{err}");
}

#[test]
fn a_saved_part_reads_back_and_is_never_replaced_unasked() {
    let d = temp_dir("parts-save");
    let mut part: Part = parts_from_ron(ONE, None).unwrap().remove(0);
    part.amp.fp2 = Some(33.0e6);
    let path = save_part(&d, &part, false).unwrap();
    assert_eq!(
        parts_from_ron(&std::fs::read_to_string(&path).unwrap(), None).unwrap(),
        [part.clone()]
    );
    let before = std::fs::read_to_string(&path).unwrap();
    let mut other = part.clone();
    other.amp.gbw = 1.0;
    assert!(save_part(&d, &other, false).is_err());
    assert_eq!(
        std::fs::read_to_string(&path).unwrap(),
        before,
        "nothing lost"
    );
    save_part(&d, &other, true).unwrap();
    assert_eq!(
        parts_from_ron(&std::fs::read_to_string(&path).unwrap(), None).unwrap()[0]
            .amp
            .gbw,
        1.0
    );
}

#[test]
fn the_library_gathers_built_ins_without_any_folder() {
    let lib = Library::gather(None, None);
    assert!(
        lib.parts
            .iter()
            .filter(|f| f.origin == Origin::BuiltIn)
            .count()
            >= 6
    );
}
