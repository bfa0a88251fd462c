//! End to end in a real terminal: the release-style binary in a tmux pane,
//! keys sent, the screen read back. Skipped (with a printed reason) where
//! tmux is not installed, except under CI, where that fails.

use crate::support::cli::temp_dir;
use crate::support::tmux::{assert_restored, start, start_in, start_with, tmux, wait_for};

#[test]
fn step_a_resistor_and_quit_in_a_real_terminal() {
    let Some(s) = start("lw_e2e_step", "") else {
        return;
    };
    let first = wait_for(&s.0, "Parameters").expect("workbench starts");
    assert!(first.contains("10kΩ"), "{first}");
    assert!(first.contains("Closed-loop response"));
    tmux(&["send-keys", "-t", &s.0, "l"]);
    // The hint line already offers "→ 11kΩ": wait for the new gain,
    // 12/(1 + 1/(a0·β·k)) = 11.9985 (finite-gain loop, derived in
    // files_and_ab::two_candidates_side_by_side).
    let after = wait_for(&s.0, "11.99").expect("gain figure redrawn");
    assert!(
        squeezed(&after).contains("rf 11kΩ"),
        "rf steps to 11k:\n{after}"
    );
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
    let screen = wait_for(&s.0, "+0.99").expect("B's rf stepped");
    assert!(screen.contains("Δ"), "difference row:\n{screen}");
    assert!(
        screen.contains("≠"),
        "differing parameter marked:\n{screen}"
    );
    // B − A = 11.9985 − 10.9988 (finite-gain loop, derived in
    // files_and_ab::two_candidates_side_by_side).
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

/// A scratch folder holding a copy of the demo as `s.ron`.
fn folder_with_demo(name: &str) -> std::path::PathBuf {
    let d = temp_dir(name);
    std::fs::write(d.join("s.ron"), loopwright::files::load::DEMO_RON).unwrap();
    d
}

/// Step rf once (10k → 11k, unsaved), send the signal, check the terminal
/// and the rescue file.
fn signal_restores_and_rescues(name: &str, signal: &str, code: i32) {
    let d = folder_with_demo(name);
    let Some(s) = start_in(name, &d, "", "s.ron") else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    tmux(&["send-keys", "-t", &s.0, "l"]);
    wait_for(&s.0, "11kΩ").expect("rf stepped");
    let pid = s.app_pid().expect("loopwright process");
    let ok = std::process::Command::new("kill")
        .args([&format!("-{signal}"), &pid.to_string()])
        .status()
        .unwrap()
        .success();
    assert!(ok, "kill -{signal}");
    let done = wait_for(&s.0, "icanon").expect("process exits and stty reports");
    // 128 + signal number: the shell convention (POSIX 2.8.2); SIGHUP is 1
    // and SIGTERM 15 (signal(7)).
    assert!(done.contains(&format!("EXIT={code}")), "{done}");
    assert_restored(&s.0, &done);
    let rescue = d.join("s.ron.rescue");
    assert!(done.contains("s.ron.rescue"), "says where:\n{done}");
    let back = loopwright::model::Scenario::load(&rescue).expect("rescue file loads");
    assert_eq!(back.stage.rf, Some(11_000.0));
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn sigterm_restores_the_terminal_and_rescues_edits() {
    signal_restores_and_rescues("lw_e2e_term", "TERM", 143);
}

#[test]
fn sighup_restores_the_terminal_and_rescues_edits() {
    signal_restores_and_rescues("lw_e2e_hup", "HUP", 129);
}

// SIGINT is 2 and SIGQUIT 3 (signal(7)): 130 and 131. Sent by another
// process; in raw mode Ctrl-C is a key, not a signal.
#[test]
fn sigint_restores_the_terminal_and_rescues_edits() {
    signal_restores_and_rescues("lw_e2e_int", "INT", 130);
}

#[test]
fn sigquit_restores_the_terminal_and_rescues_edits() {
    signal_restores_and_rescues("lw_e2e_quit", "QUIT", 131);
}

#[test]
fn a_panic_leaves_a_rescue_file() {
    let d = folder_with_demo("lw_e2e_rescue");
    let Some(s) = start_in("lw_e2e_rescue", &d, "LOOPWRIGHT_TEST_PANIC=1", "s.ron") else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    tmux(&["send-keys", "-t", &s.0, "l"]);
    wait_for(&s.0, "11kΩ").expect("rf stepped");
    tmux(&["send-keys", "-t", &s.0, "!"]);
    let done = wait_for(&s.0, "icanon").expect("process exits and stty reports");
    assert!(done.contains("deliberate test panic"), "{done}");
    assert!(done.contains("EXIT=101"), "{done}");
    assert!(done.contains("s.ron.rescue"), "says where:\n{done}");
    assert_restored(&s.0, &done);
    let back = loopwright::model::Scenario::load(&d.join("s.ron.rescue")).unwrap();
    assert_eq!(back.stage.rf, Some(11_000.0));
    // The file itself is untouched.
    assert_eq!(
        std::fs::read_to_string(d.join("s.ron")).unwrap(),
        loopwright::files::load::DEMO_RON
    );
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn save_as_over_an_existing_file_asks_in_a_real_terminal() {
    let d = folder_with_demo("lw_e2e_saveas");
    std::fs::write(d.join("b.ron"), "// keep me\n").unwrap();
    let Some(s) = start_in("lw_e2e_saveas", &d, "", "s.ron") else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    tmux(&["send-keys", "-t", &s.0, "l"]);
    wait_for(&s.0, "11kΩ").expect("rf stepped");
    tmux(&["send-keys", "-t", &s.0, "S"]);
    wait_for(&s.0, "save as").expect("prompt");
    for _ in 0..10 {
        tmux(&["send-keys", "-t", &s.0, "BSpace"]);
    }
    tmux(&["send-keys", "-t", &s.0, "-l", "b.ron"]);
    tmux(&["send-keys", "-t", &s.0, "Enter"]);
    wait_for(&s.0, "exists: overwrite it?").expect("asks");
    tmux(&["send-keys", "-t", &s.0, "n"]);
    wait_for(&s.0, "not saved").expect("kept");
    assert_eq!(
        std::fs::read_to_string(d.join("b.ron")).unwrap(),
        "// keep me\n"
    );
    tmux(&["send-keys", "-t", &s.0, "C-c"]);
    wait_for(&s.0, "EXIT=").expect("exits");
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn external_change_before_save_asks_in_a_real_terminal() {
    let d = folder_with_demo("lw_e2e_changed");
    let Some(s) = start_in("lw_e2e_changed", &d, "", "s.ron") else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    tmux(&["send-keys", "-t", &s.0, "l"]);
    wait_for(&s.0, "11kΩ").expect("rf stepped");
    let theirs = format!("// edited elsewhere\n{}", loopwright::files::load::DEMO_RON);
    std::fs::write(d.join("s.ron"), &theirs).unwrap();
    tmux(&["send-keys", "-t", &s.0, "s"]);
    wait_for(&s.0, "changed by another program").expect("asks");
    tmux(&["send-keys", "-t", &s.0, "Escape"]);
    wait_for(&s.0, "not saved").expect("kept");
    assert_eq!(std::fs::read_to_string(d.join("s.ron")).unwrap(), theirs);
    tmux(&["send-keys", "-t", &s.0, "s"]);
    wait_for(&s.0, "changed by another program").expect("asks again");
    tmux(&["send-keys", "-t", &s.0, "y"]);
    wait_for(&s.0, "saved").expect("saved");
    let back = loopwright::model::Scenario::load(&d.join("s.ron")).unwrap();
    assert_eq!(back.stage.rf, Some(11_000.0));
    tmux(&["send-keys", "-t", &s.0, "C-c"]);
    wait_for(&s.0, "EXIT=").expect("exits");
    std::fs::remove_dir_all(&d).ok();
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
    // resistors spelled with Ohm (issue 26: readable ASCII units).
    let Some(s) = start_with("lw_e2e_c_locale", "LC_ALL=C LANG=C", "") else {
        return;
    };
    let text = wait_for(&s.0, "Parameters").expect("workbench starts");
    assert!(text.contains("10kOhm"), "{text}");
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

#[test]
fn stepping_band_from_to_its_end_cannot_crash() {
    let d = folder_with_demo("lw_e2e_band");
    let Some(s) = start_in("lw_e2e_band", &d, "", "s.ron") else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    // From rf (selected at start) down to "band from", counted in the
    // parameter table among the rows the demo shows (no riso, so no
    // feedback row).
    let demo = loopwright::files::load::demo();
    let row = |path: &str| {
        loopwright::model::params::PARAMS
            .iter()
            .filter(|p| p.applies(&demo))
            .position(|p| p.path == path)
            .unwrap()
    };
    for _ in 0..row("band.from") - row("stage.rf") {
        tmux(&["send-keys", "-t", &s.0, "Down"]);
    }
    // 10 Hz down to 1 µHz (README accepted range) is 22 steps of 1-2-5.
    for _ in 0..80 {
        tmux(&["send-keys", "-t", &s.0, "Left"]);
    }
    let screen = wait_for(&s.0, "stays at 1µHz").expect("stops at the end");
    assert!(squeezed(&screen).contains("band from 1µHz"), "{screen}");
    tmux(&["send-keys", "-t", &s.0, "C-c"]);
    let done = wait_for(&s.0, "EXIT=").expect("exits");
    assert!(done.contains("EXIT=0"), "{done}");
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn saving_through_links_keeps_them_and_the_mode() {
    use std::os::unix::fs::{MetadataExt, PermissionsExt};
    let d = folder_with_demo("lw_e2e_links");
    let (real, link, hard) = (d.join("s.ron"), d.join("via.ron"), d.join("other.ron"));
    std::os::unix::fs::symlink(&real, &link).unwrap();
    std::fs::set_permissions(&real, std::fs::Permissions::from_mode(0o600)).unwrap();
    let Some(s) = start_in("lw_e2e_links", &d, "", "via.ron") else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    // 1. Through the symbolic link: the link stays a link, the file it
    // names holds the new value (rf 10 k → 11 k) and keeps mode 600.
    tmux(&["send-keys", "-t", &s.0, "l"]);
    wait_for(&s.0, "11kΩ").expect("rf stepped");
    tmux(&["send-keys", "-t", &s.0, "s"]);
    wait_for(&s.0, "saved").expect("saved");
    assert!(std::fs::symlink_metadata(&link)
        .unwrap()
        .file_type()
        .is_symlink());
    let text = std::fs::read_to_string(&real).unwrap();
    assert!(text.contains("11000"), "{text}");
    assert_eq!(std::fs::metadata(&real).unwrap().mode() & 0o777, 0o600);
    // 2. With a second hard link to the file: both names see the next
    // value (11 k → 12 k), the link count stays 2.
    std::fs::hard_link(&real, &hard).unwrap();
    tmux(&["send-keys", "-t", &s.0, "l"]);
    wait_for(&s.0, "12kΩ").expect("rf stepped");
    tmux(&["send-keys", "-t", &s.0, "s"]);
    wait_for(&s.0, "saved").expect("saved");
    tmux(&["send-keys", "-t", &s.0, "C-c"]);
    wait_for(&s.0, "EXIT=").expect("exits");
    let text = std::fs::read_to_string(&real).unwrap();
    assert!(text.contains("12000"), "{text}");
    assert_eq!(std::fs::read_to_string(&hard).unwrap(), text);
    let meta = std::fs::metadata(&real).unwrap();
    assert_eq!(meta.mode() & 0o777, 0o600);
    assert_eq!(meta.nlink(), 2);
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn closing_the_terminal_ends_the_program_and_rescues_edits() {
    // A vanished terminal (the pane killed, as when a remote session
    // drops) sends SIGHUP and leaves end-of-file on the input: the program
    // must not outlive it, and the unsaved edit is rescued.
    let d = folder_with_demo("lw_e2e_gone");
    let Some(s) = start_in("lw_e2e_gone", &d, "", "s.ron") else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    tmux(&["send-keys", "-t", &s.0, "l"]);
    wait_for(&s.0, "11kΩ").expect("rf stepped");
    let pid = s.app_pid().expect("the program's pid");
    drop(s); // kills the session and its pane
    let gone = (0..100).any(|_| {
        std::thread::sleep(std::time::Duration::from_millis(100));
        !std::path::Path::new(&format!("/proc/{pid}")).exists()
    });
    if !gone {
        let _ = std::process::Command::new("kill")
            .args(["-9", &pid.to_string()])
            .status();
    }
    assert!(gone, "the program outlived its terminal by 10 s");
    let rescued = std::fs::read_to_string(d.join("s.ron.rescue")).expect("rescue file");
    assert!(rescued.contains("11000"), "{rescued}");
    std::fs::remove_dir_all(&d).ok();
}

/// A field of /proc/PID/status (proc(5)): "VmHWM:  1234 kB", "Threads: 5".
fn proc_status(pid: u32, field: &str) -> u64 {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).unwrap();
    let line = status
        .lines()
        .find(|l| l.starts_with(&format!("{field}:")))
        .unwrap_or_else(|| panic!("{field} in /proc/{pid}/status"));
    line.split_whitespace().nth(1).unwrap().parse().unwrap()
}

#[test]
fn spread_view_with_a_million_trials_stays_small_over_many_steps() {
    let d = temp_dir("lw_e2e_spread_mem");
    let ron = std::fs::read_to_string("scenarios/adc_driver_2n2.ron").unwrap();
    let ron = ron.replace("trials: 2000", "trials: 1000000");
    assert!(ron.contains("trials: 1000000"));
    std::fs::write(d.join("s.ron"), ron).unwrap();
    // Two rayon workers whatever the machine: the thread bound below is
    // main, the signal watchdog, one job thread and the workers.
    let Some(s) = start_in("lw_e2e_spread_mem", &d, "RAYON_NUM_THREADS=2", "s.ron") else {
        return;
    };
    wait_for(&s.0, "Parameters").expect("workbench starts");
    let pid = s.app_pid().expect("loopwright process");
    for _ in 0..12 {
        tmux(&["send-keys", "-t", &s.0, "v"]);
        std::thread::sleep(std::time::Duration::from_millis(400));
        if tmux(&["capture-pane", "-p", "-t", &s.0]).contains("trials, capped") {
            break;
        }
    }
    // The cap is on the title: 100000 of the 1000000 trials.
    wait_for(&s.0, "100000 trials, capped").expect("spread view, capped");
    let mut threads = 0;
    // 120 steps, each a new stage for the running job: rf up, then down.
    // Each key is its own event (a pause between them) so that each one
    // cancels a job and starts another.
    for i in 0..120 {
        let k = if i % 2 == 0 { "l" } else { "h" };
        tmux(&["send-keys", "-t", &s.0, k]);
        std::thread::sleep(std::time::Duration::from_millis(40));
        threads = threads.max(proc_status(pid, "Threads"));
    }
    let hwm_kb = proc_status(pid, "VmHWM");
    // The brief's bounds: under 300 MB and at most 8 threads (the bug
    // reached 3.1 GB and 113 threads after 120 keys).
    assert!(hwm_kb < 300 * 1024, "peak resident {hwm_kb} kB");
    assert!(threads <= 8, "{threads} threads");
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn pick_a_part_by_typing_and_save_one_at_80x24() {
    let d = temp_dir("e2e-parts");
    std::fs::create_dir_all(d.join("user")).unwrap();
    std::fs::write(
        d.join("user/fav.ron"),
        "(name: \"bench favourite\", class: \"precision\",\n amp: (a0: 2.0e6, gbw: 3.0e6, ro: 70.0, vnoise: 7.0e-9, inoise: 3.0e-15))",
    )
    .unwrap();
    std::fs::write(
        d.join("user/broken.ron"),
        "(name: \"x\",\n  amp: (a0: 1e5, gbw: \"1Q\"))",
    )
    .unwrap();
    std::fs::write(
        d.join("stage.ron"),
        loopwright::files::load::demo().to_ron(),
    )
    .unwrap();
    let env = format!("LOOPWRIGHT_PARTS={}", d.join("user").display());
    let Some(s) = start_in("lw_e2e_parts", &d, &env, "stage.ron") else {
        return;
    };
    tmux(&["resize-window", "-t", &s.0, "-x", "80", "-y", "24"]);
    let size = tmux(&[
        "display-message",
        "-p",
        "-t",
        &s.0,
        "#{pane_width}x#{pane_height}",
    ]);
    assert_eq!(size.trim(), "80x24");
    wait_for(&s.0, "Parameters").expect("workbench starts");
    tmux(&["send-keys", "-t", &s.0, "a"]);
    let list = wait_for(&s.0, "search:").expect("the amplifier list opens");
    for group in ["built-in", "user library", "project"] {
        assert!(list.contains(group), "{group}:\n{list}");
    }
    assert!(
        list.contains("broken.ron:2:"),
        "the bad file with its place:\n{list}"
    );
    tmux(&["send-keys", "-t", &s.0, "-l", "bench"]);
    wait_for(&s.0, "1 of 7").expect("typing narrows the list");
    tmux(&["send-keys", "-t", &s.0, "Enter"]);
    let set = wait_for(&s.0, "bench favourite set").expect("applied");
    assert!(set.contains("changed a0, gbw"), "{set}");
    // A saves it into the project's parts/.
    tmux(&["send-keys", "-t", &s.0, "A"]);
    wait_for(&s.0, "part name").expect("asks the name");
    tmux(&["send-keys", "-t", &s.0, "C-u"]);
    tmux(&["send-keys", "-t", &s.0, "-l", "saved one"]);
    tmux(&["send-keys", "-t", &s.0, "Enter"]);
    wait_for(&s.0, "save where?").expect("asks where");
    tmux(&["send-keys", "-t", &s.0, "p"]);
    wait_for(&s.0, "saved in the project").expect("saved");
    assert!(d.join("parts/saved-one.ron").is_file());
    tmux(&["send-keys", "-t", &s.0, "C-c"]);
    let done = wait_for(&s.0, "EXIT=").expect("process exits");
    assert!(done.contains("EXIT=0"), "{done}");
}

#[test]
fn the_datasheet_form_in_a_real_terminal_at_80x24() {
    let d = temp_dir("e2e-sheet");
    std::fs::write(
        d.join("figs.ron"),
        "(part: \"sheet amp\", gain_db: 100, unity: \"1M\", phase_margin: 68, ro: 50,\n vnoise: (white: \"10n\"), inoise: (white: \"1p\"))",
    )
    .unwrap();
    std::fs::write(
        d.join("stage.ron"),
        loopwright::files::load::demo().to_ron(),
    )
    .unwrap();
    let Some(s) = start_in("lw_e2e_sheet", &d, "", "stage.ron") else {
        return;
    };
    tmux(&["resize-window", "-t", &s.0, "-x", "80", "-y", "24"]);
    wait_for(&s.0, "Parameters").expect("workbench starts");
    tmux(&["send-keys", "-t", &s.0, "d"]);
    wait_for(&s.0, "Amplifier from datasheet figures").expect("the form opens");
    tmux(&["send-keys", "-t", &s.0, "o"]);
    tmux(&["send-keys", "-t", &s.0, "-l", "figs.ron"]);
    tmux(&["send-keys", "-t", &s.0, "Enter"]);
    let filled = wait_for(&s.0, "the amplifier, live").expect("filled from the file");
    // fp2 = 1 MHz/tan(90° − 68°) = 2.475 MHz (issue 28's check).
    assert!(filled.contains("fp2 = 2.475 MHz"), "{filled}");
    // The phase margin row (the seventh): 95° is refused by the model.
    for _ in 0..6 {
        tmux(&["send-keys", "-t", &s.0, "Down"]);
    }
    tmux(&["send-keys", "-t", &s.0, "-l", "95"]);
    tmux(&["send-keys", "-t", &s.0, "Enter"]);
    let refused = wait_for(&s.0, "more than the").expect("no amplifier at 95°");
    assert!(refused.contains("phase_margin: 95°"), "{refused}");
    tmux(&["send-keys", "-t", &s.0, "-l", "60"]);
    tmux(&["send-keys", "-t", &s.0, "Enter"]);
    // 1 MHz/tan 30° = 1.732 MHz.
    wait_for(&s.0, "fp2 = 1.732 MHz").expect("derived again");
    tmux(&["send-keys", "-t", &s.0, "a"]);
    let set = wait_for(&s.0, "sheet amp set").expect("applied");
    assert!(set.contains("changed"), "{set}");
    tmux(&["send-keys", "-t", &s.0, "C-c"]);
    let done = wait_for(&s.0, "EXIT=").expect("process exits");
    assert!(done.contains("EXIT=0"), "{done}");
}

/// The screen with each run of spaces as one (the pane's label column is
/// as wide as its longest label).
fn squeezed(screen: &str) -> String {
    screen
        .split(' ')
        .filter(|w| !w.is_empty())
        .collect::<Vec<_>>()
        .join(" ")
}
