//! `loopwright plot`: well-formed SVG, axis labels, one path per curve, the
//! size asked for, the marks, monochrome, and refused input with no file
//! left behind.

use crate::support::cli::{bin, temp_dir};
use std::path::{Path, PathBuf};

fn scenario(name: &str) -> String {
    format!("{}/scenarios/{name}", env!("CARGO_MANIFEST_DIR"))
}

fn plot(args: &[&str]) -> std::process::Output {
    bin().arg("plot").args(args).output().unwrap()
}

/// Plot into `out` and return the SVG text (the command must succeed).
fn svg(args: &[&str], out: &Path) -> String {
    let mut all: Vec<&str> = args.to_vec();
    all.extend(["-o", out.to_str().unwrap(), "--force"]);
    let o = plot(&all);
    assert!(
        o.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    std::fs::read_to_string(out).unwrap()
}

/// Every text node, trimmed.
fn texts(doc: &roxmltree::Document) -> Vec<String> {
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or("").trim().to_string())
        .collect()
}

/// Polylines with more than 10 points: the curves (grid lines, marks and
/// legend samples have two).
fn curves(doc: &roxmltree::Document) -> usize {
    doc.descendants()
        .filter(|n| n.has_tag_name("polyline"))
        .filter(|n| {
            n.attribute("points")
                .unwrap_or("")
                .split_whitespace()
                .count()
                > 10
        })
        .count()
}

#[test]
fn every_scenario_and_view_is_well_formed_svg() {
    let dir = temp_dir("plot-all");
    let out = dir.join("f.svg");
    // Curves per stage: gain and phase; loop gain and phase with the
    // open-loop gain and the noise gain (issue 21); noise.
    let views = [
        ("response", 2, "f−3dB"),
        ("loop", 4, "PM"),
        ("noise", 1, "band"),
    ];
    for entry in std::fs::read_dir(scenario("")).unwrap() {
        let path = entry.unwrap().path();
        let p = path.to_str().unwrap();
        for (view, n, mark) in views {
            let text = svg(&[p, "--view", view], &out);
            let doc = roxmltree::Document::parse(&text).expect("SVG is XML");
            let root = doc.root_element();
            assert_eq!(root.tag_name().name(), "svg");
            assert_eq!(root.attribute("width"), Some("800"), "default width");
            assert_eq!(root.attribute("height"), Some("500"), "default height");
            let t = texts(&doc);
            assert!(
                t.iter().any(|s| s == "frequency (Hz)"),
                "{p} {view}: x axis"
            );
            // Decade labels in engineering notation (SI prefixes).
            for d in ["1Hz", "1kHz", "1MHz"] {
                assert!(t.iter().any(|s| s == d), "{p} {view}: {d}");
            }
            assert!(
                t.iter().any(|s| s.contains(mark)),
                "{p} {view}: mark {mark}"
            );
            // A two-input stage's response adds its CMRR.
            let two = std::fs::read_to_string(&path)
                .unwrap()
                .contains("Difference");
            let n = n + usize::from(two && view == "response");
            assert_eq!(curves(&doc), n, "{p} {view}: one path per curve");
        }
    }
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn two_stages_legend_size_and_units() {
    let dir = temp_dir("plot-ab");
    let out = dir.join("ab.svg");
    let (a, b) = (
        scenario("line_driver_cable.ron"),
        scenario("adc_driver_2n2.ron"),
    );
    let text = svg(
        &[
            &a, &b, "--view", "response", "--width", "640", "--height", "400",
        ],
        &out,
    );
    let doc = roxmltree::Document::parse(&text).unwrap();
    assert_eq!(doc.root_element().attribute("width"), Some("640"));
    assert_eq!(doc.root_element().attribute("height"), Some("400"));
    assert_eq!(curves(&doc), 4, "gain and phase of A and B");
    let t = texts(&doc);
    for label in [
        "A gain",
        "B gain",
        "A phase",
        "B phase",
        "magnitude (dB)",
        "phase (°)",
    ] {
        assert!(t.iter().any(|s| s == label), "{label}");
    }
    // The footer names both stages' phase margins.
    assert!(t.iter().filter(|s| s.contains("PM ")).count() >= 2);
    // Both stages have rin, so both |Zin| curves exist beside |Zout|, and
    // both have riso, so |Zout| at the pin differs from it: three each.
    let text = svg(&[&a, &b, "--view", "impedance"], &out);
    let doc = roxmltree::Document::parse(&text).unwrap();
    assert_eq!(curves(&doc), 6);
    assert!(texts(&doc).iter().any(|s| s.contains("|Zout| at the pin")));
    assert!(texts(&doc).iter().any(|s| s == "|Z| (Ω)"));
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn mono_uses_only_greys() {
    let dir = temp_dir("plot-mono");
    let out = dir.join("m.svg");
    let (a, b) = (scenario("mic_preamp.ron"), scenario("bridge_gain_101.ron"));
    let text = svg(&[&a, &b, "--view", "loop", "--mono"], &out);
    let doc = roxmltree::Document::parse(&text).unwrap();
    let mut seen = 0;
    for n in doc.descendants() {
        for attr in ["stroke", "fill"] {
            let Some(c) = n.attribute(attr).and_then(|c| c.strip_prefix('#')) else {
                continue;
            };
            seen += 1;
            let (r, g, bl) = (&c[0..2], &c[2..4], &c[4..6]);
            assert!(r == g && g == bl, "{attr} #{c} is not a grey");
        }
    }
    assert!(seen > 10);
    std::fs::remove_dir_all(&dir).ok();
}

/// The command fails, says `says` on stderr and leaves no file at `out`.
#[track_caller]
fn refused(args: &[&str], says: &str, out: &Path) {
    let o = plot(args);
    assert!(!o.status.success(), "{args:?}");
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains(says), "{args:?}: {err}");
    assert!(!out.exists(), "{args:?}: no output file");
}

#[test]
fn bad_input_leaves_no_file() {
    let dir = temp_dir("plot-bad");
    let out: PathBuf = dir.join("x.svg");
    let o = out.to_str().unwrap();
    let a = scenario("mic_preamp.ron");
    refused(&["/nonexistent/a.ron", "-o", o], "a.ron", &out);
    refused(&[&a, "--view", "nyquist", "-o", o], "possible values", &out);
    // The demo stage gives no source peak: no envelope to draw.
    let demo = format!("{}/assets/demo.ron", env!("CARGO_MANIFEST_DIR"));
    refused(&[&demo, "--view", "envelope", "-o", o], "source.peak", &out);
    refused(&[&a, "--width", "10", "-o", o], "200 to 8000", &out);
    // SVG only: another extension is refused, not filled with SVG.
    let png = dir.join("x.png");
    refused(
        &[&a, "-o", png.to_str().unwrap()],
        "name the file .svg",
        &png,
    );
    let deep = dir.join("no/such/folder/x.svg");
    refused(&[&a, "-o", deep.to_str().unwrap()], "cannot write", &deep);
    // No temporary file is left in the folder either.
    assert_eq!(std::fs::read_dir(&dir).unwrap().count(), 0);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn an_existing_file_needs_force() {
    let dir = temp_dir("plot-force");
    let out = dir.join("keep.svg");
    std::fs::write(&out, "mine").unwrap();
    let a = scenario("mic_preamp.ron");
    let o = plot(&[&a, "-o", out.to_str().unwrap()]);
    assert!(!o.status.success());
    assert!(String::from_utf8_lossy(&o.stderr).contains("--force"));
    assert_eq!(std::fs::read_to_string(&out).unwrap(), "mine", "untouched");
    let o = plot(&[&a, "-o", out.to_str().unwrap(), "--force"]);
    assert!(o.status.success());
    assert!(std::fs::read_to_string(&out).unwrap().starts_with("<svg"));
    std::fs::remove_dir_all(&dir).ok();
}

/// Every text node's text, for the views on linear axes.
fn has_text(doc: &roxmltree::Document, want: &str) -> bool {
    texts(doc).iter().any(|s| s.contains(want))
}

/// The envelope, step and spread views on every scenario: well-formed,
/// their axes and marks, one path per curve (per stage); the envelope
/// refused where the file gives no source peak.
#[test]
fn envelope_step_and_spread_views() {
    let dir = temp_dir("plot-linear");
    let out = dir.join("f.svg");
    for entry in std::fs::read_dir(scenario("")).unwrap() {
        let path = entry.unwrap().path();
        let p = path.to_str().unwrap();
        let s = loopwright::model::Scenario::load(&path).unwrap();
        // Step: time axis, the band, the settling mark, one waveform.
        let doc_text = svg(&[p, "--view", "step"], &out);
        let doc = roxmltree::Document::parse(&doc_text).unwrap();
        assert!(has_text(&doc, "time (s)"), "{p}");
        // A stage held at a rail before the step has no final value and
        // no settling (the large-signal checks): the chart says why.
        if let Some(reason) = loopwright::engine::analyze(&s).step.reason {
            assert!(has_text(&doc, &format!("no figures: {reason}")), "{p}");
        } else {
            assert!(has_text(&doc, "ts 0.1 %"), "{p}");
            assert!(has_text(&doc, "±0.1 % of the final value"), "{p}");
        }
        assert_eq!(curves(&doc), 1, "{p} step: one waveform");
        // Spread: three histograms, one outline each.
        let doc_text = svg(
            &[p, "--view", "spread", "--width", "900", "--height", "450"],
            &out,
        );
        let doc = roxmltree::Document::parse(&doc_text).unwrap();
        assert_eq!(doc.root_element().attribute("width"), Some("900"));
        for want in [
            "gain error against the target",
            "f−3dB",
            "phase margin",
            "trials",
        ] {
            assert!(has_text(&doc, want), "{p} spread: {want}");
        }
        // One outline per histogram: three, and one more for each limit
        // that trials fail (the ADC driver's settling, by its own notes);
        // a figure every trial gives alike is one "no spread" mark instead.
        let failing = p.ends_with("adc_driver_2n2.ron");
        let steady = texts(&doc)
            .iter()
            .filter(|t| t.contains("no spread: "))
            .count();
        assert_eq!(
            curves(&doc) + steady,
            if failing { 4 } else { 3 },
            "{p} spread: one outline or mark per histogram"
        );
        assert_eq!(has_text(&doc, "settling to 0.1 %"), failing, "{p}");
        if s.spec.as_ref().and_then(|x| x.pm_min_deg).is_some() {
            assert!(has_text(&doc, "limit ≥"), "{p} spread: the limit mark");
        }
        // Envelope: only with a source peak.
        if s.signal_peak().is_some() {
            let doc_text = svg(&[p, "--view", "envelope"], &out);
            let doc = roxmltree::Document::parse(&doc_text).unwrap();
            assert!(
                has_text(&doc, "frequency (Hz)") && has_text(&doc, "need"),
                "{p}"
            );
            assert!(has_text(&doc, "band"), "{p} envelope: band marks");
            assert!(curves(&doc) >= 1, "{p} envelope: the need");
        } else {
            let o = plot(&[
                p,
                "--view",
                "envelope",
                "-o",
                out.to_str().unwrap(),
                "--force",
            ]);
            assert!(!o.status.success());
            assert!(String::from_utf8_lossy(&o.stderr).contains("source.peak"));
        }
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// A and B step by different sizes: each is shown against its own final
/// value, and both waveforms are there.
#[test]
fn step_view_of_two_stages() {
    let dir = temp_dir("plot-step-ab");
    let out = dir.join("ab.svg");
    let (a, b) = (
        scenario("line_driver_cable.ron"),
        scenario("adc_driver_2n2.ron"),
    );
    let doc_text = svg(&[&a, &b, "--view", "step"], &out);
    let doc = roxmltree::Document::parse(&doc_text).unwrap();
    assert!(has_text(&doc, "output / its final value"));
    assert!(has_text(&doc, "A output") && has_text(&doc, "B output"));
    assert_eq!(curves(&doc), 2);
    std::fs::remove_dir_all(&dir).ok();
}

/// A FIFO in a fresh folder (mkfifo(3)); never anything under /dev.
fn fifo(d: &Path) -> PathBuf {
    use std::os::unix::ffi::OsStrExt;
    let p = d.join("pipe.svg");
    let c = std::ffi::CString::new(p.as_os_str().as_bytes()).unwrap();
    // SAFETY: a valid NUL-terminated path; mkfifo touches nothing else.
    assert_eq!(unsafe { libc::mkfifo(c.as_ptr(), 0o644) }, 0, "mkfifo");
    p
}

#[test]
fn outputs_that_are_not_regular_files_are_refused_even_with_force() {
    use std::os::unix::fs::FileTypeExt;
    let d = temp_dir("plot-fifo");
    let p = fifo(&d);
    let ps = p.to_str().unwrap();
    let runs: [&[&str]; 2] = [
        &[
            "plot",
            &scenario("bridge_gain_101.ron"),
            "-o",
            ps,
            "--force",
        ],
        &["manual", "-o", ps, "--force"],
    ];
    for args in runs {
        let o = bin().args(args).output().unwrap();
        assert!(!o.status.success(), "{args:?} refused");
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(err.contains("not a regular file"), "{args:?}: {err}");
        let t = std::fs::symlink_metadata(&p).unwrap().file_type();
        assert!(t.is_fifo(), "{args:?}: the FIFO is still a FIFO");
    }
    std::fs::remove_dir_all(&d).ok();
}

#[test]
fn a_dash_for_output_writes_standard_output() {
    let d = temp_dir("plot-dash");
    let runs: [(&[&str], &str); 2] = [
        (
            &["plot", &scenario("bridge_gain_101.ron"), "-o", "-"],
            "<svg",
        ),
        // A man page starts its title with the roff request .TH (man(7)).
        (&["manual", "-o", "-"], ".TH"),
    ];
    for (args, mark) in runs {
        let o = bin().args(args).current_dir(&d).output().unwrap();
        assert!(o.status.success(), "{args:?}");
        assert!(
            String::from_utf8_lossy(&o.stdout).contains(mark),
            "{args:?}"
        );
        assert!(!d.join("-").exists(), "{args:?}: no file named -");
    }
    std::fs::remove_dir_all(&d).ok();
}
