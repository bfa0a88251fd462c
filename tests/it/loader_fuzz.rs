//! The loader on broken files: every truncation of every shipped file and a
//! few thousand random byte edits. Never a panic; always either a valid
//! scenario or an error that says where (line and column).

use crate::support::cli::temp_dir;
use loopwright::model::Scenario;
use std::path::PathBuf;

/// Every shipped RON file: the example scenarios and the assets.
fn shipped() -> Vec<(PathBuf, Vec<u8>)> {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let mut out = Vec::new();
    for dir in ["scenarios", "assets"] {
        let mut files: Vec<PathBuf> = std::fs::read_dir(root.join(dir))
            .unwrap()
            .map(|e| e.unwrap().path())
            .filter(|p| p.extension().is_some_and(|e| e == "ron"))
            .collect();
        files.sort();
        for p in files {
            let bytes = std::fs::read(&p).unwrap();
            out.push((p, bytes));
        }
    }
    assert!(out.len() >= 7, "the shipped files are found");
    out
}

#[track_caller]
fn check(result: Result<Scenario, loopwright::model::ScenarioError>, what: &str) {
    match result {
        Ok(s) => assert!(s.validate().is_ok(), "{what}: loaded but invalid"),
        Err(e) => assert!(
            e.line.is_some() && e.col.is_some(),
            "{what}: error without a position: {e}"
        ),
    }
}

#[test]
fn every_truncation_of_every_shipped_file() {
    let mut cases = 0;
    for (path, bytes) in shipped() {
        let text = String::from_utf8(bytes).unwrap();
        for cut in (0..text.len()).filter(|&i| text.is_char_boundary(i)) {
            let what = format!("{} cut at byte {cut}", path.display());
            check(Scenario::from_ron(&text[..cut], None), &what);
            cases += 1;
        }
    }
    assert!(cases > 3000, "{cases} truncations");
}

/// A small linear congruential generator (Knuth's MMIX constants), so the
/// edits are the same on every run.
struct Lcg(u64);
impl Lcg {
    fn next(&mut self, n: usize) -> usize {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((self.0 >> 33) as usize) % n
    }
}

#[test]
fn random_byte_edits_of_the_shipped_files() {
    // Bytes that matter to RON and to UTF-8: structure, numbers, quotes,
    // a stray continuation byte and an invalid lead byte.
    const BYTES: &[u8] = b"(),:\"-.e0159 \n\r/*_\x80\xc3\xff";
    let files = shipped();
    let dir = temp_dir("mutate");
    let path = dir.join("m.ron");
    let mut rng = Lcg(2026);
    for case in 0..3000 {
        let (src, original) = &files[rng.next(files.len())];
        let mut bytes = original.clone();
        for _ in 0..1 + rng.next(3) {
            let at = rng.next(bytes.len());
            match rng.next(3) {
                0 => bytes[at] = BYTES[rng.next(BYTES.len())],
                1 => {
                    bytes.remove(at);
                }
                _ => bytes.insert(at, BYTES[rng.next(BYTES.len())]),
            }
        }
        std::fs::write(&path, &bytes).unwrap();
        let what = format!("case {case} from {}", src.display());
        check(Scenario::load(&path), &what);
    }
    std::fs::remove_dir_all(&dir).ok();
}
