//! What the loader accepts and refuses: file kinds (FIFO, device, folder,
//! oversized file), encodings (BOM, CRLF, non-UTF-8) and field errors that
//! must name the field. Every refusal is an error value naming the file,
//! never a hang or a panic.

use crate::support::cli::{bin, temp_dir};
use loopwright::model::scenario::Scenario;
use std::path::Path;
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

/// Run the binary; a watchdog kills it after 10 s (a hang is a failure,
/// not a slow pass: the budget only bounds the test).
fn run_guarded(args: &[&std::ffi::OsStr]) -> Output {
    let mut child = bin()
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let deadline = Instant::now() + Duration::from_secs(10);
    loop {
        if child.try_wait().unwrap().is_some() {
            return child.wait_with_output().unwrap();
        }
        if Instant::now() > deadline {
            let _ = child.kill();
            let _ = child.wait();
            panic!("loopwright {args:?} still running after 10 s: it hangs");
        }
        std::thread::sleep(Duration::from_millis(20));
    }
}

/// `report FILE` fails, prints nothing on stdout, and stderr names the
/// file and contains `want`.
#[track_caller]
fn refused(path: &Path, want: &str) -> String {
    let out = run_guarded(&["report".as_ref(), path.as_os_str()]);
    let err = String::from_utf8_lossy(&out.stderr).into_owned();
    assert!(!out.status.success(), "accepted {}: {err}", path.display());
    assert!(out.stdout.is_empty(), "stdout on error");
    assert!(
        err.contains(&path.display().to_string()),
        "names the file: {err}"
    );
    assert!(err.contains(want), "says {want:?}: {err}");
    err
}

#[test]
fn a_fifo_is_refused_at_once() {
    let d = temp_dir("fifo");
    let p = d.join("p.ron");
    let ok = Command::new("mkfifo").arg(&p).status().unwrap().success();
    assert!(ok, "mkfifo");
    refused(&p, "not a regular file");
    // compare reads the same way.
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("assets/demo.ron");
    let out = run_guarded(&["compare".as_ref(), demo.as_os_str(), p.as_os_str()]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("not a regular file"));
    // The library reader too.
    let e = Scenario::load(&p).unwrap_err();
    assert!(e.to_string().contains("p.ron"), "{e}");
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn a_character_device_is_refused() {
    refused(Path::new("/dev/zero"), "not a regular file");
}

#[test]
fn a_folder_is_refused() {
    let d = temp_dir("folder");
    let p = d.join("x.ron");
    std::fs::create_dir_all(&p).unwrap();
    refused(&p, "folder");
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn a_50_mb_file_is_refused_by_size() {
    let d = temp_dir("big");
    let p = d.join("big.ron");
    // 50 MiB of spaces after a valid scenario: valid RON, but far too big
    // for a hand-written stage (the cap is 1 MiB, see README).
    let f = std::fs::File::create(&p).unwrap();
    f.set_len(50 << 20).unwrap();
    drop(f);
    refused(&p, "larger than");
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn a_byte_order_mark_is_accepted() {
    // U+FEFF encoded in UTF-8 is EF BB BF (Unicode Standard, ch. 23.8).
    let text = format!("\u{feff}{}", loopwright::files::load::DEMO_RON);
    assert_eq!(&text.as_bytes()[..3], &[0xEF, 0xBB, 0xBF]);
    let s = Scenario::from_ron(&text, None).unwrap();
    assert_eq!(s, loopwright::files::load::demo());
    let d = temp_dir("bom");
    let p = d.join("bom.ron");
    std::fs::write(&p, &text).unwrap();
    let out = run_guarded(&["report".as_ref(), p.as_os_str()]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn crlf_files_load() {
    let text = loopwright::files::load::DEMO_RON.replace('\n', "\r\n");
    assert_eq!(
        Scenario::from_ron(&text, None).unwrap(),
        loopwright::files::load::demo()
    );
}

#[test]
fn non_utf8_gives_the_position_of_the_first_bad_byte() {
    let d = temp_dir("latin1");
    let p = d.join("latin1.ron");
    // 0xB5 is "µ" in ISO 8859-1; alone it is not valid UTF-8 (RFC 3629:
    // a continuation byte cannot start a sequence).
    let mut bytes = b"(\n  title: \"gain ".to_vec();
    bytes.push(0xB5);
    bytes.extend_from_slice(b"\",\n)\n");
    std::fs::write(&p, &bytes).unwrap();
    // Line 2, column 16: two spaces, `title: "gain ` is 14 characters more.
    let err = refused(&p, ":2:16:");
    assert!(err.contains("UTF-8"), "{err}");
    std::fs::remove_dir_all(&d).ok();
}

fn demo_with(from: &str, to: &str) -> String {
    assert!(loopwright::files::load::DEMO_RON.contains(from), "{from}");
    loopwright::files::load::DEMO_RON.replacen(from, to, 1)
}

#[test]
fn version_zero_and_fractional_versions_name_the_field() {
    let first = "    title:";
    for bad in ["0", "1.5"] {
        let text = demo_with(first, &format!("    version: {bad},\n    title:"));
        let e = Scenario::from_ron(&text, Some("v.ron")).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("version"), "{bad}: {e}");
        assert!(e.line.is_some(), "{bad}: {e}");
        assert!(e.message.contains(bad), "{bad}: {e}");
        assert!(e.message.contains("file format version"), "{e}");
        assert!(!e.message.contains("Expected comma"), "{e}");
    }
    // The current version still loads.
    let text = demo_with(first, "    version: 1,\n    title:");
    assert!(Scenario::from_ron(&text, None).is_ok());
}

#[test]
fn a_number_for_the_topology_names_the_field_and_the_choices() {
    let text = demo_with("topology: NonInverting", "topology: 1");
    let e = Scenario::from_ron(&text, Some("t.ron")).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("stage.topology"), "{e}");
    for name in ["NonInverting", "Inverting", "Follower"] {
        assert!(e.message.contains(name), "{e}");
    }
    assert!(!e.message.contains("r#"), "no raw identifier hint: {e}");
}

#[test]
fn control_characters_in_the_title_do_not_reach_the_text_report() {
    let d = temp_dir("ctl");
    let p = d.join("ctl.ron");
    let text = loopwright::files::load::DEMO_RON.replacen(
        "title: \"",
        "notes: \"x\\u{9b}y\",\n    title: \"a\\u{1b}[2Jb\\u{7}",
        1,
    );
    std::fs::write(&p, &text).unwrap();
    let s = Scenario::load(&p).unwrap();
    assert!(s.title.contains('\u{1b}'));
    let out = run_guarded(&["report".as_ref(), p.as_os_str()]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let stdout = String::from_utf8(out.stdout).unwrap();
    // C0 controls (U+0000–U+001F), DEL (U+007F) and C1 controls
    // (U+0080–U+009F) per ISO/IEC 6429; only the newline may appear.
    let bad: Vec<char> = stdout
        .chars()
        .filter(|c| c.is_control() && *c != '\n')
        .collect();
    assert!(bad.is_empty(), "control characters in the report: {bad:?}");
    assert!(stdout.contains("a\\u{1b}[2Jb\\u{7}"), "{stdout}");
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("assets/demo.ron");
    let out = run_guarded(&["compare".as_ref(), demo.as_os_str(), p.as_os_str()]);
    let stdout = String::from_utf8(out.stdout).unwrap();
    assert!(
        !stdout.chars().any(|c| c.is_control() && c != '\n'),
        "{stdout}"
    );
    std::fs::remove_dir_all(&d).ok();
}
