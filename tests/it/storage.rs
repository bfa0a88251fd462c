//! Saving: links, permissions, line endings, comments and stale temporary
//! files (src/storage.rs).

use crate::support::cli::temp_dir;
use loopwright::files::storage::{render, write_atomic, Original};
use loopwright::model::scenario::Scenario;
use std::os::unix::fs::{MetadataExt, PermissionsExt};

fn demo_text() -> String {
    loopwright::files::load::DEMO_RON.to_string()
}

#[test]
fn saving_through_a_symlink_writes_its_target() {
    let d = temp_dir("st-symlink");
    let real = d.join("real.ron");
    let link = d.join("link.ron");
    std::fs::write(&real, demo_text()).unwrap();
    std::os::unix::fs::symlink("real.ron", &link).unwrap();
    let w = write_atomic(&link, "new\n").unwrap();
    assert_eq!(w.path, d.join("real.ron"));
    assert!(
        std::fs::symlink_metadata(&link)
            .unwrap()
            .file_type()
            .is_symlink(),
        "link kept"
    );
    assert_eq!(std::fs::read_to_string(&real).unwrap(), "new\n");
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn a_hard_linked_file_is_written_in_place_after_a_backup() {
    let d = temp_dir("st-hard");
    let a = d.join("a.ron");
    let b = d.join("b.ron");
    std::fs::write(&a, "old\n").unwrap();
    std::fs::hard_link(&a, &b).unwrap();
    let w = write_atomic(&a, "new\n").unwrap();
    let (links, backup) = w.hard_links.expect("reported");
    assert_eq!(links, 2);
    assert_eq!(
        std::fs::read_to_string(&b).unwrap(),
        "new\n",
        "both names see it"
    );
    assert_eq!(
        std::fs::metadata(&a).unwrap().ino(),
        std::fs::metadata(&b).unwrap().ino()
    );
    assert_eq!(std::fs::read_to_string(backup).unwrap(), "old\n");
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn the_file_mode_is_kept() {
    let d = temp_dir("st-mode");
    let p = d.join("s.ron");
    std::fs::write(&p, "old\n").unwrap();
    std::fs::set_permissions(&p, std::fs::Permissions::from_mode(0o600)).unwrap();
    write_atomic(&p, "new\n").unwrap();
    // 0o600: owner read and write only (POSIX permission bits).
    assert_eq!(std::fs::metadata(&p).unwrap().mode() & 0o777, 0o600);
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn stale_temporary_files_are_removed_on_the_next_save() {
    let d = temp_dir("st-stale");
    let p = d.join("s.ron");
    std::fs::write(&p, "old\n").unwrap();
    // PIDs above the Linux maximum (2^22, proc(5) pid_max) are never alive.
    let stale = d.join(".s.ron.tmp-99999999");
    std::fs::write(&stale, "").unwrap();
    let live = d.join(format!(".s.ron.tmp-{}", std::process::id()));
    std::fs::write(&live, "").unwrap();
    let other = d.join(".notes.txt.tmp-99999999");
    std::fs::write(&other, "").unwrap();
    // The atomic-write-file crate's named temporary (its fallback where the
    // file system has no unnamed ones, and the link made just before the
    // rename): "." + the file's name + "." + six random letters or digits.
    let killed = d.join(".s.ron.PWe6vb");
    std::fs::write(&killed, "").unwrap();
    let hour_ago = std::time::SystemTime::now() - std::time::Duration::from_secs(3600);
    let f = std::fs::File::options().write(true).open(&killed).unwrap();
    f.set_modified(hour_ago).unwrap();
    let fresh = d.join(".s.ron.Ab12Cd");
    std::fs::write(&fresh, "").unwrap();
    let w = write_atomic(&p, "new\n").unwrap();
    assert_eq!(w.cleaned, 2);
    assert!(!stale.exists());
    assert!(!killed.exists(), "an hour-old temporary is a killed save's");
    assert!(
        fresh.exists(),
        "a fresh one may be another save's, in progress"
    );
    assert!(live.exists(), "a running process's file stays");
    assert!(other.exists(), "not ours");
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn crlf_files_stay_crlf_and_end_with_a_newline() {
    let orig = demo_text().trim_end().replace('\n', "\r\n");
    assert!(!orig.ends_with('\n'));
    let mut s = Scenario::from_ron(&orig, None).unwrap();
    // Only a number changes: patched in place.
    s.stage.rf = Some(12_000.0);
    let r = render(&s, Some(&orig));
    assert!(r.text.ends_with("\r\n"));
    assert!(!r.text.replace("\r\n", "").contains('\n'), "no bare LF");
    assert_eq!(Scenario::from_ron(&r.text, None).unwrap(), s);
    // A field removed: rewritten whole, still CRLF.
    s.stage.cf = None;
    let r = render(&s, Some(&orig));
    assert!(r.text.ends_with("\r\n"));
    assert!(!r.text.replace("\r\n", "").contains('\n'), "no bare LF");
    assert_eq!(Scenario::from_ron(&r.text, None).unwrap(), s);
    // Round trip through a file.
    let d = temp_dir("st-crlf");
    let p = d.join("s.ron");
    write_atomic(&p, &r.text).unwrap();
    assert_eq!(Scenario::load(&p).unwrap(), s);
    assert_eq!(Original::read(&p).unwrap().text, r.text);
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn comments_are_kept_when_only_numbers_change() {
    let orig = demo_text()
        .replace("rf: 10000.0,", "rf: 10e3, /* was 9k1 */")
        .replace("    temp_c:", "    // lab bench\n    temp_c:")
        + "// end\n";
    let mut s = Scenario::from_ron(&orig, None).unwrap();
    s.stage.rf = Some(11_000.0);
    s.band.1 = 20_000.0;
    s.title = "new title".into();
    let r = render(&s, Some(&orig));
    assert!(!r.drops_comments);
    for kept in ["/* was 9k1 */", "// lab bench", "// end", "rg: 1000.0,"] {
        assert!(r.text.contains(kept), "{kept}:\n{}", r.text);
    }
    assert!(r.text.contains("rf: 11000.0, /* was 9k1 */"), "{}", r.text);
    assert_eq!(Scenario::from_ron(&r.text, None).unwrap(), s);
    // Unchanged numbers keep their spelling.
    let same = Scenario::from_ron(&orig, None).unwrap();
    assert_eq!(render(&same, Some(&orig)).text, orig);
    // A field that goes away is deleted with its text; the comments stay.
    s.stage.cf = None;
    let r = render(&s, Some(&orig));
    assert!(!r.drops_comments);
    for kept in ["/* was 9k1 */", "// lab bench", "// end"] {
        assert!(r.text.contains(kept), "{kept}:\n{}", r.text);
    }
    assert!(!r.text.contains("cf:"), "{}", r.text);
    assert_eq!(Scenario::from_ron(&r.text, None).unwrap(), s);
    // A block the file writes empty cannot take a field in place: the
    // file is written whole after its leading comments, and says so.
    let empty = orig.replace("    // lab bench", "    spread: (),\n    // lab bench");
    let mut s = Scenario::from_ron(&empty, None).unwrap();
    s.spread.get_or_insert_with(Default::default).cap_tol = Some(0.1);
    let r = render(&s, Some(&empty));
    assert!(r.drops_comments);
    assert!(
        r.text.starts_with("// Built-in demo"),
        "leading comments kept"
    );
}

/// A 64 KiB tmpfs mounted on a fresh folder (root only); None, with a
/// message, where mounting is refused.
fn small_tmpfs(name: &str) -> Option<std::path::PathBuf> {
    let d = temp_dir(name);
    let ok = std::process::Command::new("mount")
        .args(["-t", "tmpfs", "-o", "size=64k", "tmpfs"])
        .arg(&d)
        .status()
        .is_ok_and(|s| s.success());
    if !ok {
        eprintln!(
            "skipped: cannot mount a tmpfs on {} (not root?)",
            d.display()
        );
        std::fs::remove_dir_all(&d).ok();
    }
    ok.then_some(d)
}

fn unmount(d: &std::path::Path) {
    std::process::Command::new("umount").arg(d).status().ok();
    std::fs::remove_dir_all(d).ok();
}

/// Fill a file system until the next write fails, then free `keep` bytes.
fn fill_leaving(d: &std::path::Path, keep: u64) {
    use std::io::Write;
    let filler = d.join("filler");
    let mut f = std::fs::File::create(&filler).unwrap();
    let page = [b'x'; 4096];
    while f.write_all(&page).is_ok() {}
    let len = std::fs::metadata(&filler).unwrap().len();
    f.set_len(len.saturating_sub(keep) / 4096 * 4096).unwrap();
}

#[test]
fn a_hard_linked_file_on_a_full_disk_is_left_whole() {
    let Some(d) = small_tmpfs("st-full") else {
        return;
    };
    let (a, b) = (d.join("a.ron"), d.join("b.ron"));
    // The reported case: 8,191 bytes, a second link, 8 KiB free after it.
    let old = format!("// {}\n", "o".repeat(8191 - 4));
    std::fs::write(&a, &old).unwrap();
    std::fs::hard_link(&a, &b).unwrap();
    fill_leaving(&d, 8192);
    let new = format!("// {}\n", "n".repeat(9000));
    let r = write_atomic(&a, &new);
    let kept = [
        std::fs::read_to_string(&a).unwrap(),
        std::fs::read_to_string(&b).unwrap(),
    ];
    unmount(&d);
    let e = r.expect_err("no space for the longer text");
    assert_eq!(kept[0], old, "a.ron intact");
    assert_eq!(kept[1], old, "b.ron intact");
    assert!(e.to_string().contains("a.ron.bak"), "names the copy: {e}");
}

#[test]
fn an_outside_change_with_the_same_size_and_time_is_seen() {
    let d = temp_dir("st-same-stamp");
    let p = d.join("s.ron");
    std::fs::write(&p, "rf: 1000\n").unwrap();
    let o = Original::read(&p).unwrap();
    let when = std::fs::metadata(&p).unwrap().modified().unwrap();
    // Another program writes text of the same length and restores the time.
    std::fs::write(&p, "rf: 2000\n").unwrap();
    let f = std::fs::File::options().write(true).open(&p).unwrap();
    f.set_modified(when).unwrap();
    assert!(o.changed_on_disk(&p), "compared by content, not by stamp");
    std::fs::write(&p, "rf: 1000\n").unwrap();
    assert!(!o.changed_on_disk(&p), "equal text is no change");
    std::fs::remove_dir_all(&d).ok();
}
