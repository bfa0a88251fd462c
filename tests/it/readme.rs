//! The README's tables list what the program's own tables hold: every key
//! of the key table and every warning code of the rules, no more, no less.

use loopwright::judge::Code;
use loopwright::ui::keys;
use std::collections::BTreeSet;

const README: &str = include_str!(concat!(env!("CARGO_MANIFEST_DIR"), "/README.md"));

/// The first cells of the markdown table whose header row is `header`.
fn first_column(header: &str) -> BTreeSet<String> {
    let mut lines = README.lines().skip_while(|l| l.trim() != header).skip(2);
    let mut out = BTreeSet::new();
    for l in lines.by_ref() {
        let Some(row) = l.trim().strip_prefix('|') else {
            break;
        };
        let cell = row.split('|').next().unwrap_or("").trim();
        out.insert(cell.trim_matches('`').to_string());
    }
    out
}

#[test]
fn readme_key_table_lists_the_key_table() {
    let readme = first_column("| key | action |");
    let table: BTreeSet<String> = keys::help_rows().map(|b| b.shown.to_string()).collect();
    assert!(!table.is_empty());
    assert_eq!(readme, table, "README keys vs the key table");
}

#[test]
fn readme_field_key_table_lists_the_field_keys() {
    let readme = first_column("| in a field | action |");
    let table: BTreeSet<String> = keys::FIELD_KEYS
        .iter()
        .map(|b| b.shown.to_string())
        .collect();
    assert_eq!(readme.len(), keys::FIELD_KEYS.len());
    assert_eq!(readme, table, "README field keys vs the field key table");
}

#[test]
fn readme_warning_table_lists_every_code() {
    let readme = first_column("| code | when |");
    let codes: BTreeSet<String> = Code::ALL.iter().map(|c| c.as_str().to_string()).collect();
    assert_eq!(codes.len(), Code::ALL.len(), "codes are distinct");
    assert_eq!(readme, codes, "README warnings vs the rules' codes");
}

#[test]
fn every_binding_has_help_and_a_distinct_action() {
    for (i, b) in keys::KEYS.iter().enumerate() {
        assert!(!b.keys.is_empty(), "{b:?}");
        assert!(
            keys::KEYS[..i].iter().all(|c| c.action != b.action),
            "action bound twice: {b:?}"
        );
    }
}

/// The fenced block that follows the line starting with `after`.
fn block_after(after: &str) -> String {
    let start = README
        .find(after)
        .unwrap_or_else(|| panic!("README: {after}"));
    let rest = &README[start..];
    let open = rest.find("```\n").unwrap() + 4;
    let close = open + rest[open..].find("```").unwrap();
    rest[open..close].to_string()
}

#[test]
fn readme_datasheet_figures_example_derives_a_model() {
    let text = block_after("`loopwright amp FROM.ron` reads the figures");
    let (_, d) =
        loopwright::files::figures::derive_text(&text, None).unwrap_or_else(|e| panic!("{e}"));
    // The example gives f_u = 1 MHz and PM = 68°: fp2 = 1 MHz/tan 22° (issue 28).
    assert!((d.amp.fp2.unwrap() / 2.475e6 - 1.0).abs() < 1e-3);
    assert_eq!(d.given, "f_u");
}

#[test]
fn readme_part_file_example_reads() {
    let text = block_after("condition), keyed by the `amp` field");
    let parts =
        loopwright::files::parts::parts_from_ron(&text, None).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(parts.len(), 1);
    assert!(parts[0].notes.contains_key("gbw"));
}
