//! The command line at its edges: closed or full standard streams, values
//! beyond the accepted ranges, and the wording of a missing-field error.

use crate::support::cli::{bin, temp_dir};
use std::process::{Output, Stdio};

/// Run the binary through `sh -c` (for redirections the test harness cannot
/// make, such as a closed stdout): `$0` is the binary.
fn sh(script: &str) -> Output {
    std::process::Command::new("sh")
        .arg("-c")
        .arg(script)
        .arg(env!("CARGO_BIN_EXE_loopwright"))
        .output()
        .unwrap()
}

fn stderr_of(args: &[&str]) -> (Option<i32>, String) {
    let out = bin().args(args).output().unwrap();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).into(),
    )
}

/// An inverting stage without rg.
const NO_RG: &str = r#"(
    title: "no rg",
    stage: (topology: Inverting, rf: 1000.0, series: E24, tolerance: 0.01),
    amp: (a0: 100000.0, gbw: 1.0e6, ro: 50.0, vnoise: 10.0e-9, inoise: 1.0e-12),
    source: (r: 50.0),
    load: (r: 2000.0),
    temp_c: 25.0,
    band: (10.0, 100000.0),
)"#;

#[test]
fn missing_field_reads_an_inverting_stage() {
    // English usage: "an" before a vowel sound ("an Inverting stage").
    let dir = temp_dir("no-rg");
    let path = dir.join("no_rg.ron");
    std::fs::write(&path, NO_RG).unwrap();
    let (code, err) = stderr_of(&["report", path.to_str().unwrap()]);
    assert_eq!(code, Some(1));
    assert!(err.contains("an Inverting stage needs rg"), "{err}");
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn closed_stdout_is_an_error() {
    // POSIX: a write to a closed descriptor fails (EBADF); the output is
    // lost, so the command must not report success.
    let out = sh(r#""$0" report >&-"#);
    assert_eq!(out.status.code(), Some(1));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("stdout is closed"), "{err}");
    // A stdout sent to /dev/null on purpose is no error.
    assert!(sh(r#""$0" report >/dev/null"#).status.success());
}

#[test]
fn full_stderr_keeps_the_exit_code() {
    // A stderr that refuses every write (/dev/full gives ENOSPC) must not
    // turn a refusal (1) or a check's unreadable file (2) into a panic (101).
    let full = || {
        Stdio::from(
            std::fs::OpenOptions::new()
                .write(true)
                .open("/dev/full")
                .unwrap(),
        )
    };
    let code = |args: &[&str]| {
        bin()
            .args(args)
            .stdout(Stdio::null())
            .stderr(full())
            .status()
            .unwrap()
            .code()
    };
    assert_eq!(code(&["report", "no/such/file.ron"]), Some(1));
    assert_eq!(code(&["check", "no/such/file.ron"]), Some(2));
    let dir = temp_dir("full-stderr");
    let svg = dir.join("p.svg");
    assert_eq!(
        code(&[
            "plot",
            "scenarios/mic_preamp.ron",
            "-o",
            svg.to_str().unwrap()
        ]),
        Some(0)
    );
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn pairs_refuse_values_beyond_the_accepted_ranges() {
    // The parameter table: gains up to 1e9, resistances 1 mΩ to 10 TΩ.
    let cases: &[(&[&str], &[&str])] = &[
        (&["pairs", "1e300"], &["GAIN 1e300", "1000000000"]),
        (&["pairs", "1e9"], &["GAIN", "10 MΩ"]),
        (
            &["pairs", "10", "--rg-min", "1e299"],
            &["--rg-min 1e299", "10 TΩ"],
        ),
        (
            &["pairs", "10", "--rg-max", "1e20"],
            &["--rg-max 1e20", "10 TΩ"],
        ),
        (&["pairs", "10", "--rg-min", "1u"], &["--rg-min 1u", "1 mΩ"]),
    ];
    for (args, wanted) in cases {
        let (code, err) = stderr_of(args);
        assert_eq!(code, Some(1), "{args:?}");
        for w in *wanted {
            assert!(err.contains(w), "{args:?}: {err}");
        }
    }
}

#[test]
fn sweep_from_below_the_lowest_frequency_is_refused() {
    // The accepted frequencies start at 1 µHz (README "Accepted ranges").
    let (code, err) = stderr_of(&["sweep", "scenarios/mic_preamp.ron", "--from", "1e-320"]);
    assert_eq!(code, Some(1));
    assert!(err.contains("1e-320") && err.contains("1 µHz"), "{err}");
    assert!(!err.contains("inf"), "{err}");
}
