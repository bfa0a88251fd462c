//! End to end in a real terminal: the release-style binary in a tmux pane,
//! keys sent, the screen read back. Where tmux is not installed (or cannot
//! start a session) the tests fail under CI (the `CI` variable set) and are
//! skipped with a printed reason elsewhere.

use std::process::Command;
use std::time::{Duration, Instant};

fn tmux(args: &[&str]) -> String {
    let out = Command::new("tmux").args(args).output().expect("tmux runs");
    String::from_utf8_lossy(&out.stdout).into_owned()
}

fn wait_for(session: &str, needle: &str) -> Option<String> {
    let deadline = Instant::now() + Duration::from_secs(15);
    loop {
        let screen = tmux(&["capture-pane", "-p", "-t", session]);
        if screen.contains(needle) {
            return Some(screen);
        }
        if Instant::now() > deadline {
            eprintln!("timed out waiting for {needle:?}; screen:\n{screen}");
            return None;
        }
        std::thread::sleep(Duration::from_millis(100));
    }
}

/// After the process has ended: raw mode off (stty shows icanon), the cursor
/// shown again and the alternate screen left.
#[track_caller]
fn assert_restored(session: &str, screen: &str) {
    assert!(!screen.contains("-icanon"), "raw mode left on:\n{screen}");
    let flags = tmux(&[
        "display-message",
        "-p",
        "-t",
        session,
        "#{cursor_flag} #{alternate_on}",
    ]);
    assert_eq!(flags.trim(), "1 0", "cursor flag and alternate screen");
}

struct Session(String);
impl Drop for Session {
    fn drop(&mut self) {
        let _ = Command::new("tmux")
            .args(["kill-session", "-t", &self.0])
            .output();
    }
}

/// No terminal to test in: a failure under CI, a printed skip elsewhere.
fn skip(why: &str) -> Option<Session> {
    assert!(
        std::env::var_os("CI").is_none(),
        "{why}, and CI is set: the end-to-end tests must run there"
    );
    println!("skipped: {why}");
    None
}

fn start(name: &str, args: &str) -> Option<Session> {
    start_with(name, "", args)
}

fn start_with(name: &str, env: &str, args: &str) -> Option<Session> {
    if Command::new("tmux").arg("-V").output().is_err() {
        return skip("tmux is not installed");
    }
    let bin = env!("CARGO_BIN_EXE_loopwright");
    let cmd = format!(
        "cd {dir} && LANG=C.UTF-8 {env} {bin} {args}; echo EXIT=$?; stty -a | tr ' ' '\\n' | grep icanon; sleep 30",
        dir = env!("CARGO_MANIFEST_DIR")
    );
    let _ = Command::new("tmux")
        .args(["kill-session", "-t", name])
        .output();
    let ok = Command::new("tmux")
        .args([
            "new-session",
            "-d",
            "-s",
            name,
            "-x",
            "100",
            "-y",
            "30",
            &cmd,
        ])
        .status()
        .map(|s| s.success())
        .unwrap_or(false);
    if !ok {
        return skip("tmux could not start a session");
    }
    Some(Session(name.to_string()))
}

#[test]
fn step_a_resistor_and_quit_in_a_real_terminal() {
    let Some(s) = start("lw_e2e_step", "") else {
        return;
    };
    let first = wait_for(&s.0, "Parameters").expect("workbench starts");
    assert!(first.contains("10kΩ"), "{first}");
    assert!(first.contains("Closed-loop response"));
    tmux(&["send-keys", "-t", &s.0, "l"]);
    let after = wait_for(&s.0, "11kΩ").expect("rf steps to 11k");
    assert!(after.contains("11.99"), "gain figure redrawn:\n{after}");
    // The plot is redrawn too: its view switches on v.
    tmux(&["send-keys", "-t", &s.0, "v"]);
    wait_for(&s.0, "Loop gain").expect("view toggles");
    // Unsaved change: q asks, y quits.
    tmux(&["send-keys", "-t", &s.0, "q"]);
    wait_for(&s.0, "quit anyway").expect("asks before quitting");
    tmux(&["send-keys", "-t", &s.0, "y"]);
    let done = wait_for(&s.0, "icanon").expect("process exits and stty reports");
    assert!(done.contains("EXIT=0"), "{done}");
    assert_restored(&s.0, &done);
}

#[test]
fn compare_two_stages_in_a_real_terminal() {
    let Some(s) = start("lw_e2e_ab", "") else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    // Copy A into B, edit B, step rf: the difference appears.
    tmux(&["send-keys", "-t", &s.0, "c"]);
    wait_for(&s.0, "copied A into B").expect("copied");
    tmux(&["send-keys", "-t", &s.0, "Tab"]);
    wait_for(&s.0, "editing B").expect("switched");
    tmux(&["send-keys", "-t", &s.0, "l"]);
    let screen = wait_for(&s.0, "11kΩ").expect("B's rf stepped");
    assert!(screen.contains("Δ"), "difference row:\n{screen}");
    assert!(
        screen.contains("≠"),
        "differing parameter marked:\n{screen}"
    );
    assert!(screen.contains("+0.99"), "gain difference shown:\n{screen}");
    tmux(&["send-keys", "-t", &s.0, "C-c"]);
    let done = wait_for(&s.0, "EXIT=").expect("process exits");
    assert!(done.contains("EXIT=0"));
}

#[test]
fn bad_file_leaves_the_terminal_alone() {
    let Some(s) = start("lw_e2e_bad", "Cargo.toml") else {
        return;
    };
    let done = wait_for(&s.0, "EXIT=").expect("process exits");
    assert!(done.contains("EXIT=1"), "{done}");
    assert!(done.contains("Cargo.toml"), "{done}");
    assert!(!done.contains("-icanon"));
}

#[test]
fn no_color_sends_no_colour_codes() {
    let ring = "scenarios/buffer_rings_10n.ron";
    let Some(s) = start_with("lw_e2e_mono", "NO_COLOR=1", ring) else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    let mono = tmux(&["capture-pane", "-e", "-p", "-t", &s.0]);
    assert!(!mono.contains("38;5;"), "NO_COLOR screen has colours");
    // Severity is still told by a symbol and by emphasis.
    assert!(mono.contains("✖ severe"));
    drop(s);
    let Some(s) = start_with("lw_e2e_colour", "", ring) else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    let colour = tmux(&["capture-pane", "-e", "-p", "-t", &s.0]);
    assert!(
        colour.contains("38;5;1m"),
        "severe warnings are red in colour mode"
    );
}

#[test]
fn terminal_is_restored_after_a_panic() {
    // The test binary is a debug build, where LOOPWRIGHT_TEST_PANIC makes `!` panic.
    let Some(s) = start_with("lw_e2e_panic", "LOOPWRIGHT_TEST_PANIC=1", "") else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    tmux(&["send-keys", "-t", &s.0, "!"]);
    let done = wait_for(&s.0, "icanon").expect("process exits and stty reports");
    assert!(done.contains("deliberate test panic"), "{done}");
    assert!(!done.contains("EXIT=0"), "{done}");
    assert_restored(&s.0, &done);
}

#[test]
fn no_color_flag_and_a_plain_locale() {
    // --no-color alone (NO_COLOR unset) sends no colour codes.
    let ring = "--no-color scenarios/buffer_rings_10n.ron";
    let Some(s) = start_with("lw_e2e_flag", "", ring) else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    let mono = tmux(&["capture-pane", "-e", "-p", "-t", &s.0]);
    assert!(!mono.contains("38;5;"), "--no-color screen has colours");
    drop(s);
    // A locale that is not UTF-8 chooses ASCII by itself (README): no Ω,
    // resistors in the RKM style (10kR).
    let Some(s) = start_with("lw_e2e_c_locale", "LC_ALL=C LANG=C", "") else {
        return;
    };
    let text = wait_for(&s.0, "Parameters").expect("workbench starts");
    assert!(text.contains("10kR"), "{text}");
    assert!(!text.contains('Ω') && !text.contains('╭'), "{text}");
}

#[test]
fn two_files_on_the_command_line() {
    let files = "scenarios/buffer_rings_10n.ron scenarios/line_driver_cable.ron";
    let Some(s) = start("lw_e2e_two", files) else {
        return;
    };
    let screen = wait_for(&s.0, "Parameters").expect("workbench starts");
    assert!(screen.contains("Δ"), "difference row:\n{screen}");
    assert!(screen.contains("≠ riso"), "{screen}");
    tmux(&["send-keys", "-t", &s.0, "C-c"]);
    let done = wait_for(&s.0, "EXIT=").expect("process exits");
    assert!(done.contains("EXIT=0"), "{done}");
}
