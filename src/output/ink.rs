//! Traces at sub-pixel precision. plotters places everything on whole
//! pixels, which leaves curves stair-stepped; here a curve is written as
//! one `<polyline>` of the computed points in fractional pixels, clipped to
//! the plot area. While a figure is drawn, each such piece is kept aside
//! and a placeholder text is drawn in its place (so it keeps its place in
//! the drawing order and its legend entry); [`finish`] puts the pieces in.

use plotters::prelude::*;
use std::cell::RefCell;
use std::fmt::Write;

thread_local! {
    static PIECES: RefCell<Vec<String>> = const { RefCell::new(Vec::new()) };
}

const TOKEN: &str = "lw-ink-";

/// Forget pieces left from an earlier figure (call before drawing).
pub(crate) fn begin() {
    PIECES.with(|p| p.borrow_mut().clear());
}

/// Where data land on the page: the plot area's pixel box and the data
/// range it shows (y up).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Frame {
    pub x: (f64, f64),
    pub y: (f64, f64),
    /// Left, right, top, bottom pixel edges of the plot area.
    pub px: (f64, f64),
    pub py: (f64, f64),
}

impl Frame {
    /// The frame of a plot area of plotters (its pixel range) showing the
    /// data ranges `x` and `y`; plotters maps onto the last pixel row and
    /// column inclusive, and so does this.
    pub(crate) fn of<DB: DrawingBackend, C: plotters::coord::CoordTranslate>(
        area: &DrawingArea<DB, C>,
        x: (f64, f64),
        y: (f64, f64),
    ) -> Frame {
        let (rx, ry) = area.get_pixel_range();
        Frame {
            x,
            y,
            px: (f64::from(rx.start), f64::from(rx.end - 1)),
            py: (f64::from(ry.start), f64::from(ry.end - 1)),
        }
    }

    /// The page position of a data point.
    pub(crate) fn at(&self, (x, y): (f64, f64)) -> (f64, f64) {
        let tx = (x - self.x.0) / (self.x.1 - self.x.0);
        let ty = (y - self.y.0) / (self.y.1 - self.y.0);
        (
            self.px.0 + tx * (self.px.1 - self.px.0),
            self.py.1 - ty * (self.py.1 - self.py.0),
        )
    }

    /// The same box showing another y range (a right-hand axis).
    pub(crate) fn with_y(self, y: (f64, f64)) -> Frame {
        Frame { y, ..self }
    }

    fn clip(&self) -> String {
        format!(
            "<clipPath id=\"{{id}}\"><rect x=\"{:.2}\" y=\"{:.2}\" width=\"{:.2}\" height=\"{:.2}\"/></clipPath>",
            self.px.0,
            self.py.0,
            self.px.1 - self.px.0 + 1.0,
            self.py.1 - self.py.0 + 1.0
        )
    }
}

/// How a trace is stroked.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Pen {
    pub color: RGBColor,
    pub width: f64,
    /// Dash and gap lengths in pixels (None: solid).
    pub dash: Option<(f64, f64)>,
    /// Open rings every tenth point (B's curves).
    pub rings: bool,
    pub opacity: f64,
}

fn hex(c: RGBColor) -> String {
    format!("#{:02X}{:02X}{:02X}", c.0, c.1, c.2)
}

/// Keep a piece aside and return the placeholder to draw in its place.
fn keep(piece: String) -> String {
    PIECES.with(|p| {
        let mut p = p.borrow_mut();
        p.push(piece);
        format!("{TOKEN}{}", p.len() - 1)
    })
}

fn clip_open(frame: &Frame) -> (String, String) {
    let n = PIECES.with(|p| p.borrow().len());
    let id = format!("lw-clip-{n}");
    (
        format!(
            "<defs>{}</defs><g clip-path=\"url(#{id})\">",
            frame.clip().replace("{id}", &id)
        ),
        "</g>".to_string(),
    )
}

/// A curve through `points` (data units), clipped to the frame; the
/// placeholder text to draw for it.
pub(crate) fn polyline(frame: &Frame, points: &[(f64, f64)], pen: &Pen) -> String {
    let (open, close) = clip_open(frame);
    let mut s = open;
    let mut pts = String::new();
    for p in points.iter().filter(|p| p.0.is_finite() && p.1.is_finite()) {
        let (x, y) = frame.at(*p);
        write!(pts, "{x:.2},{y:.2} ").ok();
    }
    let dash = pen
        .dash
        .map(|(a, b)| format!(" stroke-dasharray=\"{a} {b}\""))
        .unwrap_or_default();
    write!(
        s,
        "<polyline fill=\"none\" stroke=\"{}\" stroke-width=\"{}\" stroke-opacity=\"{}\" \
         stroke-linejoin=\"round\" stroke-linecap=\"round\"{dash} points=\"{}\"/>",
        hex(pen.color),
        pen.width,
        pen.opacity,
        pts.trim_end()
    )
    .ok();
    if pen.rings {
        // A ring every 24 px along the curve, inside the plot area.
        let mut last: Option<(f64, f64)> = None;
        for p in points.iter().filter(|p| p.0.is_finite() && p.1.is_finite()) {
            let (x, y) = frame.at(*p);
            if last.is_some_and(|(a, b)| (x - a).hypot(y - b) < 24.0)
                || y < frame.py.0
                || y > frame.py.1
            {
                continue;
            }
            last = Some((x, y));
            write!(
                s,
                "<circle cx=\"{x:.2}\" cy=\"{y:.2}\" r=\"3\" fill=\"white\" stroke=\"{}\" stroke-width=\"1\"/>",
                hex(pen.color)
            )
            .ok();
        }
    }
    s.push_str(&close);
    keep(s)
}

/// A legend's sample: a short stroke rightwards from where its
/// placeholder lands (plotters moves legend entries into their box).
pub(crate) fn sample(len: f64, pen: &Pen) -> String {
    let dash = pen
        .dash
        .map(|(a, b)| format!(" stroke-dasharray=\"{a} {b}\""))
        .unwrap_or_default();
    keep(format!(
        "<line x1=\"{{X}}\" y1=\"{{Y}}\" x2=\"{{X+{len}}}\" y2=\"{{Y}}\" stroke=\"{}\" stroke-width=\"{}\"{dash}/>",
        hex(pen.color),
        pen.width
    ))
}

/// A filled band between two y values over the frame's width (at least
/// `min_px` tall, centred, so that a narrow band still shows).
pub(crate) fn band(frame: &Frame, (y0, y1): (f64, f64), min_px: f64, color: RGBColor) -> String {
    let (_, a) = frame.at((frame.x.0, y0));
    let (_, b) = frame.at((frame.x.0, y1));
    let (top, bottom) = (a.min(b), a.max(b));
    let mid = (top + bottom) / 2.0;
    let half = ((bottom - top) / 2.0).max(min_px / 2.0);
    let (open, close) = clip_open(frame);
    let piece = format!(
        "{open}<rect x=\"{:.2}\" y=\"{:.2}\" width=\"{:.2}\" height=\"{:.2}\" fill=\"{}\" fill-opacity=\"0.22\" stroke=\"none\"/>\
         <line x1=\"{:.2}\" y1=\"{:.2}\" x2=\"{:.2}\" y2=\"{:.2}\" stroke=\"{c}\" stroke-width=\"1\" stroke-dasharray=\"5 3\"/>\
         <line x1=\"{:.2}\" y1=\"{:.2}\" x2=\"{:.2}\" y2=\"{:.2}\" stroke=\"{c}\" stroke-width=\"1\" stroke-dasharray=\"5 3\"/>{close}",
        frame.px.0,
        mid - half,
        frame.px.1 - frame.px.0,
        2.0 * half,
        hex(color),
        frame.px.0,
        mid - half,
        frame.px.1,
        mid - half,
        frame.px.0,
        mid + half,
        frame.px.1,
        mid + half,
        c = hex(color),
    );
    keep(piece)
}

/// The placeholder drawn for a kept piece (tiny text, replaced by
/// [`finish`]).
pub(crate) fn placeholder<C>(token: String, at: C) -> Text<'static, C, String> {
    Text::new(token, at, ("sans-serif", 1).into_font())
}

/// Put every kept piece in place of its placeholder.
pub(crate) fn finish(svg: String) -> String {
    let pieces = PIECES.with(|p| std::mem::take(&mut *p.borrow_mut()));
    let mut out = svg;
    for (i, piece) in pieces.iter().enumerate().rev() {
        let token = format!("{TOKEN}{i}\n");
        let Some(at) = out.find(&token) else { continue };
        let start = out[..at].rfind("<text").unwrap_or(at);
        let end = out[at..].find("</text>").map_or(at, |e| at + e + 7);
        let piece = placed(piece, &out[start..at]);
        out.replace_range(start..end, &piece);
    }
    out
}

/// A piece with `{X}`, `{Y}` and `{X+len}` set from its placeholder's
/// position (the `x` and `y` of its `<text …>` tag).
fn placed(piece: &str, tag: &str) -> String {
    if !piece.contains("{X") {
        return piece.to_string();
    }
    let attr = |name: &str| -> f64 {
        let key = format!(" {name}=\"");
        tag.find(&key)
            .and_then(|i| {
                let rest = &tag[i + key.len()..];
                rest[..rest.find('"')?].parse().ok()
            })
            .unwrap_or(0.0)
    };
    let (x, y) = (attr("x"), attr("y"));
    let mut out = piece
        .replace("{X}", &format!("{x}"))
        .replace("{Y}", &format!("{y}"));
    while let Some(i) = out.find("{X+") {
        let j = i + out[i..].find('}').unwrap_or(0);
        let len: f64 = out[i + 3..j].parse().unwrap_or(0.0);
        out.replace_range(i..=j, &format!("{}", x + len));
    }
    out
}
