//! A save changes only the text of what changed: for every shipped file
//! and the demo, every parameter the pane can set is changed, added and
//! removed in turn, and the saved text must differ from the original only
//! on the field's own line(s), never gain `Some(` or a `version` the file
//! did not have, and read back to the same scenario. (Common practice for
//! files kept under version control: a one-value change is a one-line
//! diff.)

use loopwright::files::load::{field_positions, DEMO_RON};
use loopwright::files::storage::render;
use loopwright::model::params::{Direction, Param, Presence, PARAMS};
use loopwright::model::Scenario;

/// Every shipped scenario's text, and the demo's.
fn texts() -> Vec<(String, String)> {
    let mut out = vec![("demo".to_string(), DEMO_RON.to_string())];
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios");
    let mut files: Vec<_> = std::fs::read_dir(dir).unwrap().flatten().collect();
    files.sort_by_key(|e| e.path());
    for e in files {
        let text = std::fs::read_to_string(e.path()).unwrap();
        out.push((e.path().display().to_string(), text));
    }
    out
}

/// The lines that differ, once the common first and last lines are set
/// aside: (old lines, new lines).
fn changed_lines<'a>(a: &'a str, b: &'a str) -> (Vec<&'a str>, Vec<&'a str>) {
    let (la, lb): (Vec<&str>, Vec<&str>) = (a.lines().collect(), b.lines().collect());
    let head = la.iter().zip(&lb).take_while(|(x, y)| x == y).count();
    let tail = la[head..]
        .iter()
        .rev()
        .zip(lb[head..].iter().rev())
        .take_while(|(x, y)| x == y)
        .count();
    (
        la[head..la.len() - tail].to_vec(),
        lb[head..lb.len() - tail].to_vec(),
    )
}

/// The edits the pane makes to one parameter: a step each way, and for an
/// optional one, removing it when present or adding it (a step from
/// absent) when not.
fn edits(p: &Param, s: &Scenario) -> Vec<(&'static str, Scenario)> {
    let mut out = Vec::new();
    for (what, dir) in [("step up", Direction::Up), ("step down", Direction::Down)] {
        let mut t = s.clone();
        if p.step(&mut t, dir) && t != *s {
            out.push((what, t));
        }
    }
    let optional = matches!(p.presence, Presence::Optional | Presence::ZeroIsAbsent);
    if optional && p.get(s).is_some() {
        let mut t = s.clone();
        p.set(&mut t, None);
        out.push(("remove", t));
    }
    out
}

/// The field's own name, or its block's, is on every changed line.
fn names_the_field(line: &str, path: &str) -> bool {
    let parts: Vec<&str> = path.split('.').collect();
    let last = if parts.last() == Some(&"from") || parts.last() == Some(&"to") {
        "band"
    } else {
        parts[parts.len() - 1]
    };
    line.contains(&format!("{last}:")) || line.contains(&format!("{}:", parts[0]))
}

/// Every field of a file with its value as written: (dotted path, text).
fn fields(text: &str) -> Vec<(String, String)> {
    field_positions(text)
        .into_iter()
        .map(|f| (f.path, value_at(&text[f.value_offset..]).to_string()))
        .collect()
}

/// The value text at the start of `rest`: a string, a bracketed group or
/// a bare token.
fn value_at(rest: &str) -> &str {
    let rest = rest.trim_start();
    let mut depth = 0;
    let mut quoted = false;
    for (i, c) in rest.char_indices() {
        match c {
            '"' => quoted = !quoted,
            '(' if !quoted => depth += 1,
            ')' if !quoted && depth > 0 => depth -= 1,
            ',' | ')' | '\n' if !quoted && depth == 0 => return rest[..i].trim_end(),
            _ => {}
        }
        if depth == 0 && i > 0 && c == ')' && !quoted {
            return &rest[..=i];
        }
    }
    rest
}

#[test]
fn every_edit_of_every_file_changes_only_its_field() {
    let mut checked = 0;
    for (file, text) in texts() {
        let original = Scenario::from_ron(&text, None).unwrap();
        for p in PARAMS.iter().filter(|p| p.applies(&original)) {
            for (what, s) in edits(p, &original) {
                if s.validate().is_err() {
                    continue;
                }
                let saved = render(&s, Some(&text));
                let at = format!("{file}, {} {what}", p.path);
                assert!(!saved.drops_comments, "{at}: rewritten whole");
                let back = Scenario::from_ron(&saved.text, None);
                assert_eq!(back.as_ref(), Ok(&s), "{at}: reads back otherwise");
                // A switch to a kind with another kind of input (a current,
                // one voltage, two voltages) also changes the source fields
                // (README "Scenario files").
                let inputs = |x: &Scenario| std::mem::discriminant(&x.stage.topology.kind().input);
                if p.path == "stage.topology" && inputs(&s) != inputs(&original) {
                    checked += 1;
                    continue;
                }
                let (old, new) = changed_lines(&text, &saved.text);
                assert!(old.len() <= 1 && new.len() <= 2, "{at}: {old:?} → {new:?}");
                let lines: Vec<&&str> = old.iter().chain(&new).collect();
                assert!(
                    lines.is_empty() || lines.iter().any(|l| names_the_field(l, p.path)),
                    "{at}: {old:?} → {new:?}"
                );
                let block = p.path.split('.').next().unwrap_or_default();
                let band = p.path.starts_with("band.");
                let (fa, fb) = (fields(&text), fields(&saved.text));
                // The field, its blocks, and a block added or removed whole.
                let whole = [&fa, &fb].iter().any(|f| !f.iter().any(|x| x.0 == block));
                // Every field whose value the edit changed (switching the
                // topology also adds or drops rg and rf).
                let moved: Vec<&str> = original.differences(&s).iter().map(|d| d.0).collect();
                let ours = |f: &str| {
                    moved.iter().any(|m| {
                        *m == f
                            || (band || *m == "band") && f == "band"
                            || m.starts_with(&format!("{f}."))
                    }) || whole && f.starts_with(&format!("{block}."))
                };
                for (path, value) in fa.iter().filter(|f| !ours(&f.0)) {
                    let now = fb.iter().find(|f| &f.0 == path).map(|f| &f.1);
                    assert_eq!(now, Some(value), "{at}: {path} changed");
                }
                assert_eq!(
                    fa.iter().filter(|f| !ours(&f.0)).count(),
                    fb.iter().filter(|f| !ours(&f.0)).count(),
                    "{at}: a field appeared"
                );
                assert!(!saved.text.contains("Some("), "{at}: Some( written");
                assert_eq!(
                    saved.text.contains("version:"),
                    text.contains("version:"),
                    "{at}: version added or lost"
                );
                checked += 1;
            }
        }
    }
    // 9 files × dozens of parameters × up to three edits.
    assert!(checked > 500, "only {checked} edits checked");
}

#[test]
fn a_save_without_an_edit_changes_nothing() {
    for (file, text) in texts() {
        let s = Scenario::from_ron(&text, None).unwrap();
        let saved = render(&s, Some(&text));
        let text = if text.ends_with('\n') {
            text
        } else {
            format!("{text}\n")
        };
        assert_eq!(saved.text, text, "{file}");
    }
}

/// A stage whose values are written as a designer writes them.
const WRITTEN: &str = r#"// values as written on a schematic
(
    title: "written values",
    stage: (topology: Inverting, rg: "1k", rf: "19k1", cf: "4.7n", series: E24, tolerance: 0.01),
    amp: (a0: 100000.0, gbw: "10M", ro: "50R", vnoise: "10n", inoise: 1.0e-12),
    source: (r: 50.0),
    load: (r: "2k2"),
    temp_c: 25.0,
    band: ("20", "20k"),
)
"#;

#[test]
fn values_read_in_rkm_and_si_notation() {
    let s = Scenario::from_ron(WRITTEN, None).unwrap();
    // IEC 60062 RKM code: the letter stands at the decimal point (19k1 = 19.1 kΩ).
    assert_eq!(s.stage.rf, Some(19_100.0));
    assert_eq!(s.stage.rg, Some(1_000.0));
    assert_eq!(s.load.r, Some(2_200.0));
    assert_eq!(s.amp.ro, 50.0);
    // SI prefixes: n = 1e-9, M = 1e6, k = 1e3 (SI 2019 prefixes).
    assert_eq!(s.stage.cf, Some(4.7e-9));
    assert_eq!(s.amp.gbw, 10.0e6);
    assert_eq!(s.amp.vnoise, 10.0e-9);
    assert_eq!(s.band, (20.0, 20_000.0));
}

#[test]
fn a_value_that_is_not_one_names_its_field_line_and_column() {
    let bad = WRITTEN.replace("\"19k1\"", "\"19q1\"");
    let e = Scenario::from_ron(&bad, Some("w.ron")).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("stage.rf"), "{e}");
    assert_eq!(e.line, Some(4), "{e}");
    assert!(e.to_string().contains("19q1"), "{e}");
}

#[test]
fn a_save_keeps_each_value_in_its_written_form() {
    let mut s = Scenario::from_ron(WRITTEN, None).unwrap();
    s.stage.rf = Some(20_000.0);
    s.stage.cf = Some(5.6e-9);
    s.amp.gbw = 20.0e6;
    s.band.1 = 50_000.0;
    let saved = render(&s, Some(WRITTEN));
    assert!(!saved.drops_comments);
    // RKM stays RKM, SI stays SI, each still a string (20k = 20 000 Ω).
    for kept in [
        "rf: \"20k\"",
        "cf: \"5.6n\"",
        "gbw: \"20M\"",
        "band: (\"20\", \"50k\")",
        "rg: \"1k\"",
    ] {
        assert!(saved.text.contains(kept), "{kept}:\n{}", saved.text);
    }
    assert_eq!(Scenario::from_ron(&saved.text, None).unwrap(), s);
}
