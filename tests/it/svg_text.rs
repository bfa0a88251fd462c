//! Figures fit for a review: in every view of every shipped scenario (and
//! the demo), A alone and A against B, at 800×500 and 480×300, no text
//! leaves the figure, no two texts overlap, and every curve lies inside
//! the plot area. Text boxes are estimated from the SVG itself: the font
//! size of each `<text>` and the length of its string.

use loopwright::judge::evaluate;
use loopwright::judge::Evaluation;
use loopwright::model::Scenario;
use loopwright::output::svg::{self, Evaluated, Look};
use loopwright::output::views::VIEWS;

/// Every shipped scenario and the demo.
fn stages() -> Vec<Scenario> {
    let dir = format!("{}/scenarios", env!("CARGO_MANIFEST_DIR"));
    let mut paths: Vec<_> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "ron"))
        .collect();
    paths.sort();
    let mut out = vec![loopwright::files::load::demo()];
    out.extend(paths.iter().map(|p| Scenario::load(p).unwrap()));
    out
}

/// A text's box: left, top, right, bottom (px).
#[derive(Debug, Clone, Copy)]
struct TextBox {
    l: f64,
    t: f64,
    r: f64,
    b: f64,
}

impl TextBox {
    fn overlaps(&self, o: &TextBox) -> bool {
        // Touching is allowed; a pixel of overlap is not.
        self.l < o.r - 1.0 && o.l < self.r - 1.0 && self.t < o.b - 1.0 && o.t < self.b - 1.0
    }
}

/// The box of one `<text>`: width from the string's length at 0.6 em a
/// character (a generous mean advance for a sans-serif face: common
/// practice puts it near 0.5 em), height one em. plotters sets the anchor
/// with `text-anchor` (start, middle, end) and the top with `dy="0.76em"`
/// (top-aligned), `dy="0.5ex"` (middle) or none (baseline); a rotated
/// text (the y axes' descriptions) is turned a quarter about its anchor.
fn text_box(n: &roxmltree::Node) -> Option<(String, TextBox)> {
    let text = n.text()?.trim().to_string();
    if text.is_empty() {
        return None;
    }
    let f = |a: &str| n.attribute(a).and_then(|v| v.parse::<f64>().ok());
    let (x, y, size) = (f("x")?, f("y")?, f("font-size")?);
    let w = text.chars().count() as f64 * 0.6 * size;
    let h = size;
    let (l, r) = match n.attribute("text-anchor") {
        Some("middle") => (x - w / 2.0, x + w / 2.0),
        Some("end") => (x - w, x),
        _ => (x, x + w),
    };
    let (t, b) = match n.attribute("dy") {
        Some("0.76em") => (y, y + h),
        Some("0.5ex") => (y - h / 2.0, y + h / 2.0),
        Some(d) if d.ends_with("em") || d.ends_with("ex") => (y - h / 2.0, y + h / 2.0),
        _ => (y - 0.8 * h, y + 0.2 * h),
    };
    let bx = if n
        .attribute("transform")
        .is_some_and(|t| t.contains("rotate"))
    {
        // A quarter turn about (x, y): width and height swap.
        let (hw, hh) = ((r - l) / 2.0, (b - t) / 2.0);
        let (cx, cy) = ((l + r) / 2.0 - x, (t + b) / 2.0 - y);
        let (rx, ry) = (x + cy, y - cx);
        TextBox {
            l: rx - hh,
            r: rx + hh,
            t: ry - hw,
            b: ry + hw,
        }
    } else {
        TextBox { l, t, r, b }
    };
    Some((text, bx))
}

/// What is wrong with one figure's text and curves.
fn faults(svg_text: &str, (w, h): (u32, u32)) -> Vec<String> {
    let doc = roxmltree::Document::parse(svg_text).expect("SVG is XML");
    let boxes: Vec<(String, TextBox)> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .filter_map(|n| text_box(&n))
        .collect();
    let mut out = Vec::new();
    for (s, b) in &boxes {
        if b.l < -0.5 || b.t < -0.5 || b.r > f64::from(w) + 0.5 || b.b > f64::from(h) + 0.5 {
            out.push(format!("leaves the figure: {s:?} {b:?}"));
        }
    }
    for (i, (s, b)) in boxes.iter().enumerate() {
        for (s2, b2) in &boxes[i + 1..] {
            if b.overlaps(b2) {
                out.push(format!("overlap: {s:?} {b:?} and {s2:?} {b2:?}"));
            }
        }
    }
    // Every curve (a clipped polyline of many points) inside its clip box.
    for g in doc.descendants().filter(|n| n.has_tag_name("g")) {
        let Some(rect) = g
            .attribute("clip-path")
            .and_then(|c| c.strip_prefix("url(#"))
            .and_then(|c| c.strip_suffix(')'))
            .and_then(|id| doc.descendants().find(|n| n.attribute("id") == Some(id)))
            .and_then(|c| c.children().find(|n| n.has_tag_name("rect")))
        else {
            continue;
        };
        let f = |a: &str| rect.attribute(a).unwrap().parse::<f64>().unwrap();
        let (x0, y0, x1, y1) = (f("x"), f("y"), f("x") + f("width"), f("y") + f("height"));
        for p in g.children().filter(|n| n.has_tag_name("polyline")) {
            for xy in p.attribute("points").unwrap().split_whitespace() {
                let (x, y) = xy.split_once(',').unwrap();
                let (x, y): (f64, f64) = (x.parse().unwrap(), y.parse().unwrap());
                if x < x0 - 0.5 || x > x1 + 0.5 || y < y0 - 0.5 || y > y1 + 0.5 {
                    out.push(format!("a curve leaves the plot area at ({x}, {y})"));
                    break;
                }
            }
        }
    }
    out
}

/// Every view of every stage alone and against the next, at both sizes.
#[test]
fn no_text_leaves_a_figure_or_overlaps_and_curves_stay_inside() {
    let all = stages();
    let evals: Vec<Evaluation> = all.iter().map(evaluate).collect();
    let ev = |i: usize| Evaluated {
        scenario: &all[i],
        eval: &evals[i],
    };
    let mut problems = Vec::new();
    let mut drawn = 0;
    for size in [(800, 500), (480, 300)] {
        let look = Look {
            width: size.0,
            height: size.1,
            mono: false,
        };
        for view in VIEWS.iter() {
            // The spread runs a Monte Carlo: one stage alone and one pair.
            let n = if view.name == "spread" { 1 } else { all.len() };
            for i in 0..n {
                let j = (i + 1) % all.len();
                for stages in [vec![ev(i)], vec![ev(i), ev(j)]] {
                    let Ok(text) = svg::render(view, &stages, look) else {
                        continue; // a stage the view cannot draw
                    };
                    drawn += 1;
                    for f in faults(&text, size) {
                        let names: Vec<&str> =
                            stages.iter().map(|s| s.scenario.title.as_str()).collect();
                        problems.push(format!("{} {size:?} {names:?}: {f}", view.name));
                    }
                }
            }
        }
    }
    assert!(drawn > 100, "only {drawn} figures drawn");
    assert!(
        problems.is_empty(),
        "{} faults, the first 40:\n{}",
        problems.len(),
        problems[..problems.len().min(40)].join("\n")
    );
}

/// The checker itself: a text past the right edge and two texts on one
/// another are found (a hand-made figure).
#[test]
fn the_checker_finds_cut_and_overlapping_text() {
    let cut = r#"<svg xmlns="http://www.w3.org/2000/svg" width="100" height="50">
<text x="60" y="10" dy="0.76em" font-size="10">a long label here</text></svg>"#;
    assert_eq!(faults(cut, (100, 50)).len(), 1);
    let on = r#"<svg xmlns="http://www.w3.org/2000/svg" width="200" height="50">
<text x="10" y="10" dy="0.76em" font-size="10">first</text>
<text x="20" y="12" dy="0.76em" font-size="10">second</text></svg>"#;
    assert_eq!(faults(on, (200, 50)).len(), 1);
    let fine = r#"<svg xmlns="http://www.w3.org/2000/svg" width="200" height="50">
<text x="10" y="10" dy="0.76em" font-size="10">first</text>
<text x="10" y="30" dy="0.76em" font-size="10">second</text></svg>"#;
    assert!(faults(fine, (200, 50)).is_empty());
}
