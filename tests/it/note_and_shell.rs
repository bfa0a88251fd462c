//! `report --md` (the design note and its figures), `completions` and
//! `manual`.

use crate::support::cli::{bin, stdout_of, temp_dir};
use clap::CommandFactory;
use loopwright::commands::Cli;
use loopwright::judge::figures::FIGURES;

fn run(args: &[&str]) -> std::process::Output {
    bin().args(args).output().unwrap()
}

fn scenario(name: &str) -> String {
    format!("{}/scenarios/{name}", env!("CARGO_MANIFEST_DIR"))
}

/// The Markdown text with its escapes undone (`\|` → `|`).
fn unescaped(md: &str) -> String {
    let mut out = String::new();
    let mut chars = md.chars().peekable();
    while let Some(c) = chars.next() {
        if c == '\\' {
            if let Some(n) = chars.next() {
                out.push(n);
            }
        } else {
            out.push(c);
        }
    }
    out
}

#[test]
fn note_holds_every_figure_and_warning_of_the_report() {
    for entry in std::fs::read_dir(scenario("")).unwrap() {
        let path = entry.unwrap().path();
        let p = path.to_str().unwrap();
        let text = stdout_of(&["report", p]);
        let md = unescaped(&stdout_of(&["report", p, "--md"]));
        let title = text.lines().next().unwrap();
        assert!(md.starts_with(&format!("# {title}\n")), "{p}: title");
        let mut checked = 0;
        for f in FIGURES.iter().filter(|f| f.shown.text) {
            let prefix = format!("  {} ", f.label);
            let Some(line) = text.lines().find(|l| l.starts_with(&prefix)) else {
                continue;
            };
            let value = line[prefix.len()..].trim();
            assert!(
                md.contains(&format!("| {} | {value} |", f.label)),
                "{p}: {line}"
            );
            checked += 1;
        }
        assert!(checked >= 14, "{p}: {checked} figures");
        let warnings = text.lines().skip_while(|l| *l != "Warnings").skip(1);
        for w in warnings {
            let said = w.split_once(": ").unwrap().1;
            assert!(md.contains(said), "{p}: warning {said}");
        }
        // A current input has no source r: its diode's capacitance instead.
        let s = loopwright::model::Scenario::load(&path).unwrap();
        let source = if s.current_input() {
            "`source.cd`"
        } else {
            "`source.r`"
        };
        for part in ["`amp.gbw`", source, "`band.to`"] {
            assert!(md.contains(part), "{p}: part {part}");
        }
    }
}

#[test]
fn resistors_show_series_and_tolerance() {
    // assets/demo.ron: rg 1 kΩ and rf 10 kΩ on E24 at 1 % (README example).
    let md = unescaped(&stdout_of(&["report", "--md"]));
    assert!(md.contains("| rg (`stage.rg`) | 1kΩ | E24 | ±1% |"), "{md}");
    assert!(
        md.contains("| rf (`stage.rf`) | 10kΩ | E24 | ±1% |"),
        "{md}"
    );
}

#[test]
fn figures_are_written_linked_and_not_overwritten() {
    let dir = temp_dir("note-figs");
    let figs = dir.join("figs");
    let f = figs.to_str().unwrap();
    let a = scenario("mic_preamp.ron");
    let md = stdout_of(&["report", &a, "--md", "--figures", f]);
    for view in ["response", "loop", "noise", "impedance"] {
        let file = figs.join(format!("mic_preamp-{view}.svg"));
        let svg = std::fs::read_to_string(&file).unwrap();
        roxmltree::Document::parse(&svg).expect("figure is XML");
        assert!(
            md.contains(&format!("]({})", file.display())),
            "link to {view}"
        );
    }
    let before = std::fs::read(figs.join("mic_preamp-loop.svg")).unwrap();
    std::fs::write(figs.join("mic_preamp-noise.svg"), "mine").unwrap();
    let o = run(&["report", &a, "--md", "--figures", f]);
    assert!(!o.status.success() && o.stdout.is_empty());
    assert!(String::from_utf8_lossy(&o.stderr).contains("--force"));
    let noise = std::fs::read_to_string(figs.join("mic_preamp-noise.svg")).unwrap();
    assert_eq!(noise, "mine", "refused before writing anything");
    assert_eq!(
        std::fs::read(figs.join("mic_preamp-loop.svg")).unwrap(),
        before
    );
    stdout_of(&["report", &a, "--md", "--figures", f, "--force"]);
    let noise = std::fs::read_to_string(figs.join("mic_preamp-noise.svg")).unwrap();
    assert!(noise.starts_with("<svg"));
    // --figures only with --md.
    assert!(!run(&["report", &a, "--figures", f]).status.success());
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn completions_and_manual_come_from_the_same_definitions() {
    let names: Vec<String> = Cli::command()
        .get_subcommands()
        .map(|c| c.get_name().to_string())
        .collect();
    assert!(names.len() >= 7);
    let bash = stdout_of(&["completions", "bash"]);
    let zsh = stdout_of(&["completions", "zsh"]);
    let fish = stdout_of(&["completions", "fish"]);
    // Each shell's own form: bash `complete -F`, zsh `#compdef`, fish `complete -c`
    // (the shells' manuals).
    assert!(bash.contains("complete -F"), "bash");
    assert!(zsh.starts_with("#compdef loopwright"), "zsh");
    assert!(fish.contains("complete -c loopwright"), "fish");
    let man = stdout_of(&["manual"]);
    // man(7): a page has a .TH title line naming it.
    assert!(
        man.lines().any(|l| l.starts_with(".TH loopwright")),
        "{man}"
    );
    for n in &names {
        for (what, text) in [
            ("bash", &bash),
            ("zsh", &zsh),
            ("fish", &fish),
            ("man", &man),
        ] {
            assert!(text.contains(n.as_str()), "{what} lacks {n}");
        }
    }
    // The plot views are offered by the completions.
    assert!(bash.contains("impedance") && fish.contains("impedance"));
    assert!(!run(&["completions", "tcsh"]).status.success());
}

#[test]
fn manual_to_a_file_refuses_to_overwrite() {
    let dir = temp_dir("manual");
    let out = dir.join("loopwright.1");
    let o = out.to_str().unwrap();
    assert!(
        stdout_of(&["manual", "-o", o]).is_empty(),
        "nothing on stdout"
    );
    let page = std::fs::read_to_string(&out).unwrap();
    assert_eq!(page, stdout_of(&["manual"]));
    let r = run(&["manual", "-o", o]);
    assert!(!r.status.success());
    assert!(String::from_utf8_lossy(&r.stderr).contains("exists"));
    stdout_of(&["manual", "-o", o, "--force"]);
    let deep = dir.join("no/such/dir/loopwright.1");
    let r = run(&["manual", "-o", deep.to_str().unwrap()]);
    assert!(!r.status.success() && !deep.exists());
    assert!(String::from_utf8_lossy(&r.stderr).contains("cannot write"));
    assert_eq!(
        std::fs::read_dir(&dir).unwrap().count(),
        1,
        "no temporary left"
    );
    std::fs::remove_dir_all(&dir).ok();
}

/// A file with a spec gets the spec over the tolerances in its note: each
/// limit, and the yield with the verdict `check` gives (exit 1 = fails).
#[test]
fn note_holds_the_spec_and_its_yield() {
    for (name, passes) in [
        ("adc_driver_2n2.ron", false),
        ("line_driver_cable.ron", true),
    ] {
        let p = scenario(name);
        let md = unescaped(&stdout_of(&["report", &p, "--md"]));
        assert!(md.contains("## Spec over the tolerances"), "{md}");
        assert!(md.contains("| `pm_min_deg` |"), "{md}");
        let code = bin().args(["check", &p]).output().unwrap().status.code();
        assert_eq!(code == Some(0), passes);
        let verdict = if passes {
            "the stage meets its spec"
        } else {
            "the stage does not meet its spec"
        };
        assert!(md.contains(verdict), "{md}");
    }
    // Without a spec, no such section.
    assert!(!stdout_of(&["report", &scenario("mic_preamp.ron"), "--md"]).contains("## Spec"));
}

#[test]
fn every_page_the_manual_names_is_written_by_manual_dir() {
    // man(7): a reference `name(1)` names a page of section 1; each page
    // has a `.TH NAME 1` title line. Every reference of the main page must
    // be a page `manual --dir` writes.
    let man = stdout_of(&["manual"]);
    let named: Vec<String> = man
        .lines()
        .filter_map(|l| l.strip_suffix("(1)"))
        .map(|n| n.replace("\\-", "-"))
        .collect();
    assert!(named.len() >= 7, "{man}");
    let dir = temp_dir("manual-dir");
    let d = dir.join("pages");
    let r = run(&["manual", "--dir", d.to_str().unwrap()]);
    assert!(r.status.success(), "{}", String::from_utf8_lossy(&r.stderr));
    assert!(d.join("loopwright.1").is_file());
    for n in &named {
        let page = std::fs::read_to_string(d.join(format!("{n}.1")))
            .unwrap_or_else(|e| panic!("{n}.1 not written: {e}"));
        let th = format!(".TH {n} 1");
        assert!(page.lines().any(|l| l.starts_with(&th)), "{n}: {page}");
    }
    // The main page in the folder is the one on standard output; a second
    // run refuses to overwrite without --force and writes nothing.
    assert_eq!(
        std::fs::read_to_string(d.join("loopwright.1")).unwrap(),
        man
    );
    assert!(man.contains("manual \\-\\-dir"), "{man}");
    let again = run(&["manual", "--dir", d.to_str().unwrap()]);
    assert!(!again.status.success());
    assert!(run(&["manual", "--dir", d.to_str().unwrap(), "--force"])
        .status
        .success());
    std::fs::remove_dir_all(&dir).ok();
}
