//! Driving the debug binary in a real tmux pane: start, send keys, read the
//! screen, find the process. Without tmux the tests skip with a message,
//! except under CI (`CI` set), where a missing tmux fails.

use std::path::Path;
use std::process::Command;
use std::time::{Duration, Instant};

pub fn tmux(args: &[&str]) -> String {
    let out = Command::new("tmux").args(args).output().expect("tmux runs");
    String::from_utf8_lossy(&out.stdout).into_owned()
}

pub fn wait_for(session: &str, needle: &str) -> Option<String> {
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
pub fn assert_restored(session: &str, screen: &str) {
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

pub struct Session(pub String);
impl Drop for Session {
    fn drop(&mut self) {
        let _ = Command::new("tmux")
            .args(["kill-session", "-t", &self.0])
            .output();
    }
}

impl Session {
    /// The loopwright process running in the pane (a child of the pane's
    /// shell), found through /proc.
    pub fn app_pid(&self) -> Option<u32> {
        let shell: u32 = tmux(&["display-message", "-p", "-t", &self.0, "#{pane_pid}"])
            .trim()
            .parse()
            .ok()?;
        let deadline = Instant::now() + Duration::from_secs(15);
        while Instant::now() < deadline {
            for e in std::fs::read_dir("/proc").ok()?.flatten() {
                let Ok(pid) = e.file_name().to_string_lossy().parse::<u32>() else {
                    continue;
                };
                let Ok(stat) = std::fs::read_to_string(e.path().join("stat")) else {
                    continue;
                };
                // proc(5): "pid (comm) state ppid ..."; comm may hold spaces.
                let Some((comm, rest)) = stat.rsplit_once(')') else {
                    continue;
                };
                let ppid = rest.split_whitespace().nth(1).and_then(|p| p.parse().ok());
                if ppid == Some(shell) && comm.ends_with("(loopwright") {
                    return Some(pid);
                }
            }
            std::thread::sleep(Duration::from_millis(50));
        }
        None
    }
}

pub fn start(name: &str, args: &str) -> Option<Session> {
    start_with(name, "", args)
}

pub fn start_with(name: &str, env: &str, args: &str) -> Option<Session> {
    start_in(name, Path::new(env!("CARGO_MANIFEST_DIR")), env, args)
}

/// Start the workbench in `dir` with extra environment and arguments; after
/// it ends the pane shows `EXIT=code` and the tty's icanon flag.
pub fn start_in(name: &str, dir: &Path, env: &str, args: &str) -> Option<Session> {
    if Command::new("tmux").arg("-V").output().is_err() {
        assert!(
            std::env::var_os("CI").is_none(),
            "tmux is not installed: CI must run the terminal tests"
        );
        println!("skipped: tmux is not installed");
        return None;
    }
    let bin = env!("CARGO_BIN_EXE_loopwright");
    let cmd = format!(
        "cd {dir} && LANG=C.UTF-8 LOOPWRIGHT_PARTS={parts} {env} {bin} {args}; echo EXIT=$?; stty -a | tr ' ' '\\n' | grep icanon; sleep 30",
        dir = dir.display(),
        // Never the real user library: an empty folder of the test's own.
        parts = std::env::temp_dir().join("lw-no-user-parts").display()
    );
    let _ = Command::new("tmux")
        .args(["kill-session", "-t", name])
        .output();
    // Tests run in parallel on one tmux server, which exits when its last
    // session ends: a new session can race that exit, so try again.
    let ok = (0..10).any(|attempt| {
        if attempt > 0 {
            std::thread::sleep(Duration::from_millis(200));
        }
        Command::new("tmux")
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
            .unwrap_or(false)
    });
    if !ok {
        assert!(
            std::env::var_os("CI").is_none(),
            "tmux could not start a session under CI"
        );
        println!("skipped: tmux could not start a session");
        return None;
    }
    Some(Session(name.to_string()))
}
