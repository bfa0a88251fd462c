//! Running the binary and giving each test a folder of its own.

/// Run the binary; its stdout as text (it must succeed).
pub fn stdout_of(args: &[&str]) -> String {
    let out = bin().args(args).output().unwrap();
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

/// The binary, with the user part library pointed away from the real
/// home (a folder that holds nothing; a test may set its own).
pub fn bin() -> std::process::Command {
    let mut c = std::process::Command::new(env!("CARGO_BIN_EXE_loopwright"));
    c.env(
        "LOOPWRIGHT_PARTS",
        std::env::temp_dir().join("lw-no-user-parts"),
    );
    c
}

/// A fresh, empty folder for one test (named after it and the process).
pub fn temp_dir(name: &str) -> std::path::PathBuf {
    let d = std::env::temp_dir().join(format!("lw-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}
