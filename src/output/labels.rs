//! Where the texts inside a plot go: each in the first free place of its
//! own list of candidates (beside its rule, or around its dot), free
//! meaning inside the plot area, on no text placed before and crossed by
//! no drawn line (the curves and rules the figure registers first).
//! Text is measured as everywhere in the figures: 0.6 em a character.

use crate::output::ink::Frame;
use plotters::style::text_anchor::HPos;

/// The page size of a plotters font size (plotters writes `size / 1.24`).
pub(crate) fn em(font: u32) -> f64 {
    f64::from(font) / 1.24
}

/// A text's width on the page: 0.6 em a character, a generous mean
/// advance for a sans-serif face, so what is laid out by it fits.
pub fn text_width(text: &str, font: u32) -> f64 {
    text.chars().count() as f64 * 0.6 * em(font)
}

/// A box on the page: left, top, right, bottom (px).
type Rect = (f64, f64, f64, f64);

/// A straight piece of a drawn line on the page (px).
type Piece = ((f64, f64), (f64, f64));

/// Whether a piece passes through the inside of a box (Liang–Barsky
/// clipping of the piece to the box).
fn crosses(((ax, ay), (bx, by)): Piece, (l, t, r, b): Rect) -> bool {
    let (dx, dy) = (bx - ax, by - ay);
    let (mut u0, mut u1) = (0.0f64, 1.0f64);
    for (p, q) in [(-dx, ax - l), (dx, r - ax), (-dy, ay - t), (dy, b - ay)] {
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

/// The texts placed in one plot and the lines they keep off.
#[derive(Default)]
pub(crate) struct Placer {
    taken: Vec<Rect>,
    lines: Vec<Piece>,
}

impl Placer {
    /// A curve (data points of `frame`) the texts keep off; the parts
    /// outside the plot area are clipped away and do not count.
    pub(crate) fn avoid_curve(&mut self, frame: &Frame, points: &[(f64, f64)]) {
        let px: Vec<(f64, f64)> = points
            .iter()
            .filter(|p| p.0.is_finite() && p.1.is_finite())
            .map(|p| frame.at(*p))
            .collect();
        let inside = |a: (f64, f64), b: (f64, f64)| {
            !(a.1.max(b.1) < frame.py.0
                || a.1.min(b.1) > frame.py.1
                || a.0.max(b.0) < frame.px.0
                || a.0.min(b.0) > frame.px.1)
        };
        self.lines.extend(
            px.windows(2)
                .filter(|w| inside(w[0], w[1]))
                .map(|w| (w[0], w[1])),
        );
    }

    /// A vertical rule at data x over the whole plot.
    pub(crate) fn avoid_rule(&mut self, frame: &Frame, x: f64) {
        let (px, _) = frame.at((x, frame.y.0));
        self.lines.push(((px, frame.py.0), (px, frame.py.1)));
    }

    /// A horizontal rule at data y over the whole plot.
    pub(crate) fn avoid_level(&mut self, frame: &Frame, y: f64) {
        let (_, py) = frame.at((frame.x.0, y));
        self.lines.push(((frame.px.0, py), (frame.px.1, py)));
    }

    /// A shaded band between two data levels, at least `min_px` tall
    /// about its middle (as [`crate::output::ink::band`] draws it): its
    /// two edges.
    pub(crate) fn avoid_band(&mut self, frame: &Frame, (y0, y1): (f64, f64), min_px: f64) {
        let (a, b) = (frame.at((frame.x.0, y0)).1, frame.at((frame.x.0, y1)).1);
        let (mid, half) = ((a + b) / 2.0, ((a - b).abs() / 2.0).max(min_px / 2.0));
        for py in [mid - half, mid + half] {
            self.lines.push(((frame.px.0, py), (frame.px.1, py)));
        }
    }

    /// How many lines and texts a box meets, or None when it leaves the
    /// plot area. Texts may touch (the box shrunk by a pixel); lines keep
    /// a pixel clear (the box grown by one), since plotters sets a text on
    /// whole pixels.
    fn hits(&self, frame: &Frame, b: Rect) -> Option<usize> {
        let inside = b.0 >= frame.px.0 + 1.0
            && b.2 <= frame.px.1 - 1.0
            && b.1 >= frame.py.0 + 1.0
            && b.3 <= frame.py.1 - 1.0;
        if !inside {
            return None;
        }
        let s = (b.0 + 1.0, b.1 + 1.0, b.2 - 1.0, b.3 - 1.0);
        let texts = self
            .taken
            .iter()
            .filter(|o| s.0 < o.2 && o.0 < s.2 && s.1 < o.3 && o.1 < s.3)
            .count();
        let g = (b.0 - 1.0, b.1 - 1.0, b.2 + 1.0, b.3 + 1.0);
        let lines = self.lines.iter().filter(|p| crosses(**p, g)).count();
        // A text on a text is worse than a line through one.
        Some(texts * 100 + lines)
    }

    /// The first free box of `tops_lefts` (each a top-left corner of a
    /// `w` × `h` box), else the one meeting fewest, else the first; taken.
    fn take(&mut self, frame: &Frame, corners: &[(f64, f64)], (w, h): (f64, f64)) -> (f64, f64) {
        let mut best: Option<((f64, f64), usize)> = None;
        for &(l, t) in corners {
            match self.hits(frame, (l, t, l + w, t + h)) {
                Some(0) => {
                    best = Some(((l, t), 0));
                    break;
                }
                Some(n) if best.is_none_or(|b| n < b.1) => best = Some(((l, t), n)),
                _ => {}
            }
        }
        let (l, t) = best.map_or(corners[0], |b| b.0);
        self.taken.push((l, t, l + w, t + h));
        (l, t)
    }

    /// The label of a vertical rule at data x `x`: beside the rule (right
    /// of it, or left in the plot's right part), in the first row from
    /// the top where it is free, else slid sideways away from it. Returns the text's top-left offset from
    /// the top of the rule (px) and its anchor (always the left).
    pub(crate) fn place(
        &mut self,
        frame: &Frame,
        x: f64,
        text: &str,
        font: u32,
    ) -> (i32, i32, HPos) {
        let (px, top) = frame.at((x, frame.y.1));
        let (tw, th) = (text_width(text, font), em(font) * 1.15);
        let gap = 5.0;
        let (right, left) = (px + gap, px - gap - tw);
        let sides = if px > frame.px.0 + 0.6 * (frame.px.1 - frame.px.0) {
            [left, right]
        } else {
            [right, left]
        };
        // Every row beside the rule first, then the rows slid away from it
        // (the text keeps its rule's colour).
        let mut corners = Vec::new();
        let step = th * 2.0;
        let mut slide = 0.0;
        while slide <= frame.px.1 - frame.px.0 {
            let mut t = top + 4.0;
            while t + th <= frame.py.1 - 1.0 {
                let away = |l: f64| if l > px { l + slide } else { l - slide };
                corners.extend(sides.iter().map(|l| (away(*l), t)));
                t += th * 1.25;
            }
            slide += step;
        }
        // Nothing fits beside it: inside the plot's right edge, any row.
        let mut t = top + 4.0;
        while t + th <= frame.py.1 - 1.0 {
            corners.push(((frame.px.1 - 2.0 - tw).max(frame.px.0 + 2.0), t));
            t += th * 1.25;
        }
        let (l, t) = self.take(frame, &corners, (tw, th));
        (
            (l - px).round() as i32,
            (t - top).round() as i32,
            HPos::Left,
        )
    }

    /// The label of a dot at data (x, y): above and right of it (below and
    /// left first when `left_first`), then the other corners, then slid
    /// along the dot's level away from it. Returns the text's top-left
    /// offset from the dot (px).
    pub(crate) fn place_by_dot(
        &mut self,
        frame: &Frame,
        at: (f64, f64),
        text: &str,
        (font, left_first): (u32, bool),
    ) -> (i32, i32) {
        let (px, py) = frame.at(at);
        let (tw, th) = (text_width(text, font), em(font) * 1.15);
        let (above, below) = (py - 4.0 - th, py + 4.0);
        let mut corners = Vec::new();
        let mut slide = 0.0;
        while slide <= frame.px.1 - frame.px.0 {
            let (r, l) = (px + 6.0 + slide, px - 6.0 - tw - slide);
            let four = [(r, above), (l, below), (l, above), (r, below)];
            let order = if left_first {
                [1, 0, 2, 3]
            } else {
                [0, 1, 3, 2]
            };
            corners.extend(order.iter().map(|i| four[*i]));
            slide += th * 2.0;
        }
        let (l, t) = self.take(frame, &corners, (tw, th));
        ((l - px).round() as i32, (t - py).round() as i32)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn frame() -> Frame {
        Frame {
            x: (0.0, 100.0),
            y: (0.0, 100.0),
            px: (0.0, 100.0),
            py: (0.0, 100.0),
        }
    }

    /// A label moves off a curve that runs along the top of the plot
    /// (a hand-made case: the curve is the row the label would take).
    #[test]
    fn a_label_keeps_off_a_curve_and_off_another_label() {
        let f = frame();
        let mut p = Placer::default();
        p.avoid_curve(&f, &[(0.0, 94.0), (100.0, 94.0)]);
        p.avoid_rule(&f, 20.0);
        let (_, dy, _) = p.place(&f, 20.0, "abc", 10);
        // The first row (4 px under the top) is crossed at 6 px: next row.
        assert!(dy > 8, "dy {dy}");
        let (dx2, dy2, _) = p.place(&f, 20.0, "abc", 10);
        assert!(dy2 != dy || dx2 < 0, "second label on the first");
    }
}
