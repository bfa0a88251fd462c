//! Figures fit for a review: in every view of every shipped scenario (and
//! the demo), A alone and A against B, at 800×500 and 480×300, no text
//! leaves the figure, no two texts overlap, no drawn line (a curve, a
//! mark's rule, a band's edge) runs through a text, and every curve lies
//! inside the plot area. Text boxes are estimated from the SVG itself: the font
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

/// One straight piece of a drawn line (px), and the box it is seen in
/// (its clip box, or the whole page).
#[derive(Debug, Clone, Copy)]
struct Segment {
    a: (f64, f64),
    b: (f64, f64),
    seen: TextBox,
}

impl Segment {
    /// Whether the visible part of the piece passes through the inside of
    /// a text's box (shrunk by a pixel each side: a line may touch a text,
    /// as a rule beside its label does). Liang–Barsky clipping of the
    /// segment to the box, intersected with where the line is seen.
    fn crosses(&self, t: &TextBox) -> bool {
        let (l, r) = (self.seen.l.max(t.l + 1.0), self.seen.r.min(t.r - 1.0));
        let (top, bot) = (self.seen.t.max(t.t + 1.0), self.seen.b.min(t.b - 1.0));
        if l >= r || top >= bot {
            return false;
        }
        let (dx, dy) = (self.b.0 - self.a.0, self.b.1 - self.a.1);
        let (mut u0, mut u1) = (0.0f64, 1.0f64);
        for (p, q) in [
            (-dx, self.a.0 - l),
            (dx, r - self.a.0),
            (-dy, self.a.1 - top),
            (dy, bot - self.a.1),
        ] {
            if p == 0.0 {
                if q < 0.0 {
                    return false;
                }
            } else if p < 0.0 {
                u0 = u0.max(q / p);
            } else {
                u1 = u1.min(q / p);
            }
        }
        u0 <= u1
    }
}

/// The pieces of every drawn line a text must keep off: each curve or
/// edge in a clipped group (a polyline or a line: curves, a band's
/// edges) and each rule drawn in a colour (a mark's rule, a band rule, a
/// limit); the black axes and ticks, the faint grid and the legend's
/// samples (`<line>` outside the plot) are the frame texts sit on.
fn lines(doc: &roxmltree::Document) -> Vec<Segment> {
    let page = TextBox {
        l: f64::NEG_INFINITY,
        t: f64::NEG_INFINITY,
        r: f64::INFINITY,
        b: f64::INFINITY,
    };
    let mut out = Vec::new();
    let in_clip = |n: &roxmltree::Node| n.ancestors().any(|g| g.attribute("clip-path").is_some());
    let drawn = doc
        .descendants()
        .filter(|n| n.has_tag_name("polyline") || (n.has_tag_name("line") && in_clip(n)));
    for p in drawn {
        let clip = p
            .ancestors()
            .find_map(|g| g.attribute("clip-path"))
            .and_then(|c| c.strip_prefix("url(#")?.strip_suffix(')'))
            .and_then(|id| doc.descendants().find(|n| n.attribute("id") == Some(id)))
            .and_then(|c| c.children().find(|n| n.has_tag_name("rect")));
        let seen = match clip {
            Some(rect) => {
                let f = |a: &str| rect.attribute(a).unwrap().parse::<f64>().unwrap();
                TextBox {
                    l: f("x"),
                    t: f("y"),
                    r: f("x") + f("width"),
                    b: f("y") + f("height"),
                }
            }
            None if p.attribute("stroke") == Some("#000000") => continue,
            None => page,
        };
        let ends = ["x1", "y1", "x2", "y2"].map(|a| p.attribute(a).unwrap_or("0"));
        let pair = format!("{},{} {},{}", ends[0], ends[1], ends[2], ends[3]);
        let pts: Vec<(f64, f64)> = p
            .attribute("points")
            .unwrap_or(&pair)
            .split_whitespace()
            .filter_map(|xy| {
                let (x, y) = xy.split_once(',')?;
                Some((x.parse().ok()?, y.parse().ok()?))
            })
            .collect();
        out.extend(pts.windows(2).map(|w| Segment {
            a: w[0],
            b: w[1],
            seen,
        }));
    }
    out
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
    let drawn = lines(&doc);
    for (s, b) in &boxes {
        if let Some(line) = drawn.iter().find(|l| l.crosses(b)) {
            out.push(format!("a drawn line crosses {s:?} {b:?}: {line:?}"));
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
    // A coloured rule through a label, and a clipped curve through one,
    // are found; a black axis beside a label and a curve clipped away
    // before it are not.
    let ruled = r##"<svg xmlns="http://www.w3.org/2000/svg" width="200" height="50">
<polyline stroke="#164696" points="30,0 30,50 "/>
<text x="10" y="10" dy="0.76em" font-size="10">f-3dB 1 kHz</text></svg>"##;
    assert_eq!(faults(ruled, (200, 50)).len(), 1);
    let curve = |points: &str| {
        format!(
            r##"<svg xmlns="http://www.w3.org/2000/svg" width="200" height="50">
<defs><clipPath id="c"><rect x="0" y="0" width="200" height="50"/></clipPath></defs>
<g clip-path="url(#c)"><polyline stroke="#164696" points="{points}"/></g>
<polyline stroke="#000000" points="9,0 9,50 "/>
<text x="10" y="10" dy="0.76em" font-size="10">crossover</text></svg>"##
        )
    };
    assert_eq!(faults(&curve("0,40 100,5 200,5 "), (200, 50)).len(), 1);
    assert!(faults(&curve("0,40 100,30 200,30 "), (200, 50)).is_empty());
}
