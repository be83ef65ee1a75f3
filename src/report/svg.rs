//! Small inline SVG charts for the self-contained report: no scripts, no network.
//!
//! Every label passes through [`escape`]; charts have a `<title>` for screen readers.

use super::escape::escape;
use std::fmt::Write as _;

/// A colour-blind-safe palette (Okabe & Ito 2008).
pub const PALETTE: [&str; 8] = [
    "#0072B2", "#E69F00", "#009E73", "#CC79A7", "#56B4E9", "#D55E00", "#F0E442", "#000000",
];

/// One line of a line chart.
#[derive(Debug, Clone)]
pub struct Series {
    /// Legend name.
    pub name: String,
    /// Points (x, y).
    pub points: Vec<(f64, f64)>,
    /// Colour.
    pub color: String,
    /// Dashed line.
    pub dashed: bool,
}

/// A shaded band (an interval around a line).
#[derive(Debug, Clone)]
pub struct Band {
    /// (x, low, high) points.
    pub points: Vec<(f64, f64, f64)>,
    /// Colour.
    pub color: String,
}

/// Axes and decorations of a chart.
#[derive(Debug, Clone)]
pub struct Frame {
    /// Title (for screen readers and the caption).
    pub title: String,
    /// X-axis label.
    pub x_label: String,
    /// Y-axis label.
    pub y_label: String,
    /// X range.
    pub x: (f64, f64),
    /// Y range.
    pub y: (f64, f64),
    /// Width and height in pixels.
    pub size: (f64, f64),
    /// Horizontal reference lines (y, label).
    pub h_lines: Vec<(f64, String)>,
    /// Vertical reference lines (x, label).
    pub v_lines: Vec<(f64, String)>,
}

impl Frame {
    /// A frame with default size and no reference lines.
    pub fn new(title: &str, x_label: &str, y_label: &str, x: (f64, f64), y: (f64, f64)) -> Self {
        let fix = |r: (f64, f64)| {
            if !(r.0.is_finite() && r.1.is_finite()) || r.1 <= r.0 {
                (r.0.min(0.0), r.0.max(0.0) + 1.0)
            } else {
                r
            }
        };
        Frame {
            title: title.into(),
            x_label: x_label.into(),
            y_label: y_label.into(),
            x: fix(x),
            y: fix(y),
            size: (640.0, 260.0),
            h_lines: Vec::new(),
            v_lines: Vec::new(),
        }
    }
}

const LEFT: f64 = 52.0;
const RIGHT: f64 = 12.0;
const TOP: f64 = 14.0;
const BOTTOM: f64 = 40.0;

struct Scale {
    f: Frame,
}

impl Scale {
    fn px(&self, x: f64) -> f64 {
        let w = self.f.size.0 - LEFT - RIGHT;
        LEFT + (x - self.f.x.0) / (self.f.x.1 - self.f.x.0) * w
    }
    fn py(&self, y: f64) -> f64 {
        let h = self.f.size.1 - TOP - BOTTOM;
        TOP + h - (y - self.f.y.0) / (self.f.y.1 - self.f.y.0) * h
    }
}

/// Round tick positions covering `range` (about `count` of them).
pub fn ticks(range: (f64, f64), count: usize) -> Vec<f64> {
    let span = range.1 - range.0;
    if span <= 0.0 || !span.is_finite() {
        return vec![range.0];
    }
    let raw = span / count.max(1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    let mut t = (range.0 / step).ceil() * step;
    let mut out = Vec::new();
    while t <= range.1 + step * 1e-9 {
        out.push(if t.abs() < step * 1e-9 { 0.0 } else { t });
        t += step;
    }
    out
}

fn fmt_tick(v: f64) -> String {
    if (v - v.round()).abs() < 1e-9 {
        format!("{}", v.round() as i64)
    } else {
        format!("{v:.2}").trim_end_matches('0').to_string()
    }
}

fn svg_start(out: &mut String, s: &Scale) {
    let (w, h) = s.f.size;
    let _ = write!(
        out,
        r#"<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {w} {h}" width="{w}" height="{h}" role="img" font-family="sans-serif" font-size="11"><title>{}</title>"#,
        escape(&s.f.title)
    );
}

fn y_ticks(out: &mut String, s: &Scale) {
    let w = s.f.size.0;
    for t in ticks(s.f.y, 5) {
        let y = s.py(t);
        let _ = write!(
            out,
            r##"<line x1="{LEFT}" y1="{y:.1}" x2="{}" y2="{y:.1}" stroke="#ddd"/><text x="{}" y="{:.1}" text-anchor="end" fill="#444">{}</text>"##,
            w - RIGHT,
            LEFT - 4.0,
            y + 4.0,
            fmt_tick(t)
        );
    }
}

fn open(out: &mut String, s: &Scale) {
    let (w, h) = s.f.size;
    svg_start(out, s);
    let _ = write!(
        out,
        r##"<rect x="{LEFT}" y="{TOP}" width="{}" height="{}" fill="none" stroke="#999"/>"##,
        w - LEFT - RIGHT,
        h - TOP - BOTTOM
    );
    for t in ticks(s.f.x, 8) {
        let x = s.px(t);
        let _ = write!(
            out,
            r##"<line x1="{x:.1}" y1="{}" x2="{x:.1}" y2="{}" stroke="#ddd"/><text x="{x:.1}" y="{}" text-anchor="middle" fill="#444">{}</text>"##,
            TOP,
            h - BOTTOM,
            h - BOTTOM + 14.0,
            fmt_tick(t)
        );
    }
    y_ticks(out, s);
    let _ = write!(
        out,
        r##"<text x="{:.1}" y="{}" text-anchor="middle" fill="#222">{}</text><text x="12" y="{:.1}" text-anchor="middle" fill="#222" transform="rotate(-90 12 {:.1})">{}</text>"##,
        LEFT + (w - LEFT - RIGHT) / 2.0,
        h - 6.0,
        escape(&s.f.x_label),
        TOP + (h - TOP - BOTTOM) / 2.0,
        TOP + (h - TOP - BOTTOM) / 2.0,
        escape(&s.f.y_label)
    );
}

fn references(out: &mut String, s: &Scale) {
    for (y, label) in &s.f.h_lines {
        let py = s.py(*y);
        let _ = write!(
            out,
            r##"<line x1="{LEFT}" y1="{py:.1}" x2="{}" y2="{py:.1}" stroke="#555" stroke-dasharray="4 3"/><text x="{}" y="{:.1}" text-anchor="end" fill="#555">{}</text>"##,
            s.f.size.0 - RIGHT,
            s.f.size.0 - RIGHT - 2.0,
            py - 3.0,
            escape(label)
        );
    }
    for (x, label) in &s.f.v_lines {
        let px = s.px(*x);
        let _ = write!(
            out,
            r##"<line x1="{px:.1}" y1="{TOP}" x2="{px:.1}" y2="{}" stroke="#555" stroke-dasharray="2 2"/><text x="{:.1}" y="{}" fill="#555">{}</text>"##,
            s.f.size.1 - BOTTOM,
            px + 3.0,
            TOP + 11.0,
            escape(label)
        );
    }
}

fn legend(out: &mut String, _s: &Scale, items: &[(&str, &str, bool)]) {
    let mut x = LEFT + 8.0;
    for (name, color, dashed) in items {
        let dash = if *dashed {
            r#" stroke-dasharray="5 3""#
        } else {
            ""
        };
        let _ = write!(
            out,
            r#"<line x1="{x:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="{color}" stroke-width="2.5"{dash}/><text x="{:.1}" y="{:.1}" fill="currentColor">{}</text>"#,
            x + 16.0,
            x + 20.0,
            TOP + 14.0,
            escape(name),
            y = TOP + 10.0
        );
        x += 28.0 + 6.5 * name.chars().count() as f64;
    }
}

/// A line chart with optional interval bands and reference lines.
pub fn line_chart(frame: Frame, series: &[Series], bands: &[Band]) -> String {
    let s = Scale { f: frame };
    let mut out = String::new();
    open(&mut out, &s);
    for b in bands {
        if b.points.is_empty() {
            continue;
        }
        let mut d = String::new();
        for (i, (x, _, hi)) in b.points.iter().enumerate() {
            let _ = write!(
                d,
                "{}{:.1},{:.1} ",
                if i == 0 { "M" } else { "L" },
                s.px(*x),
                s.py(*hi)
            );
        }
        for (x, lo, _) in b.points.iter().rev() {
            let _ = write!(d, "L{:.1},{:.1} ", s.px(*x), s.py(*lo));
        }
        let _ = write!(
            out,
            r#"<path d="{d}Z" fill="{}" fill-opacity="0.18" stroke="none"/>"#,
            b.color
        );
    }
    references(&mut out, &s);
    for line in series {
        if line.points.is_empty() {
            continue;
        }
        let pts: Vec<String> = line
            .points
            .iter()
            .map(|(x, y)| format!("{:.1},{:.1}", s.px(*x), s.py(*y)))
            .collect();
        let dash = if line.dashed {
            r#" stroke-dasharray="5 3""#
        } else {
            ""
        };
        let _ = write!(
            out,
            r#"<polyline points="{}" fill="none" stroke="{}" stroke-width="2"{dash}><title>{}</title></polyline>"#,
            pts.join(" "),
            line.color,
            escape(&line.name)
        );
    }
    let items: Vec<(&str, &str, bool)> = series
        .iter()
        .map(|l| (l.name.as_str(), l.color.as_str(), l.dashed))
        .collect();
    if items.len() > 1 {
        legend(&mut out, &s, &items);
    }
    out.push_str("</svg>");
    out
}

/// One bar of a bar chart: a label, a value and an optional interval.
#[derive(Debug, Clone)]
pub struct Bar {
    /// Label under (or beside) the bar.
    pub label: String,
    /// Value.
    pub value: f64,
    /// Interval (low, high), drawn as a whisker.
    pub interval: Option<(f64, f64)>,
    /// Colour.
    pub color: String,
}

/// Vertical bars with optional interval whiskers (e.g. win rates with Wilson intervals).
pub fn bar_chart(frame: Frame, bars: &[Bar]) -> String {
    let n = bars.len().max(1) as f64;
    let mut f = frame;
    f.x = (0.0, n);
    let s = Scale { f };
    let mut out = String::new();
    let (w, h) = s.f.size;
    svg_start(&mut out, &s);
    y_ticks(&mut out, &s);
    references(&mut out, &s);
    let slot = (w - LEFT - RIGHT) / n;
    for (i, b) in bars.iter().enumerate() {
        let x0 = LEFT + slot * i as f64 + slot * 0.15;
        let bw = slot * 0.7;
        let y0 = s.py(s.f.y.0.max(0.0));
        let y1 = s.py(b.value);
        let _ = write!(
            out,
            r#"<rect x="{x0:.1}" y="{:.1}" width="{bw:.1}" height="{:.1}" fill="{}"><title>{}: {:.3}</title></rect>"#,
            y1.min(y0),
            (y0 - y1).abs(),
            b.color,
            escape(&b.label),
            b.value
        );
        if let Some((lo, hi)) = b.interval {
            let cx = x0 + bw / 2.0;
            let _ = write!(
                out,
                r##"<line x1="{cx:.1}" y1="{:.1}" x2="{cx:.1}" y2="{:.1}" stroke="#222" stroke-width="1.5"/><line x1="{:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="#222"/><line x1="{:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="#222"/>"##,
                s.py(lo),
                s.py(hi),
                cx - 5.0,
                s.py(lo),
                cx + 5.0,
                s.py(lo),
                cx - 5.0,
                s.py(hi),
                cx + 5.0,
                s.py(hi)
            );
        }
        let label: String = b.label.chars().take(18).collect();
        let _ = write!(
            out,
            r##"<text x="{:.1}" y="{:.1}" text-anchor="middle" fill="#333">{}</text>"##,
            x0 + bw / 2.0,
            h - BOTTOM + 14.0,
            escape(&label)
        );
    }
    let _ = write!(
        out,
        r##"<text x="12" y="{:.1}" text-anchor="middle" fill="#222" transform="rotate(-90 12 {:.1})">{}</text>"##,
        TOP + (h - TOP - BOTTOM) / 2.0,
        TOP + (h - TOP - BOTTOM) / 2.0,
        escape(&s.f.y_label)
    );
    out.push_str("</svg>");
    out
}

/// One row of the "when was it decided" chart: a session's length and its decided turn.
#[derive(Debug, Clone)]
pub struct Span {
    /// Last turn of the session.
    pub length: f64,
    /// Decided turn, if it was decided.
    pub decided: Option<f64>,
    /// Colour of the bar (by winner seat or route).
    pub color: String,
    /// Hover text.
    pub label: String,
}

/// Every session as a thin horizontal bar of its length, with its decided turn marked: the part
/// after the decided turn (settled play) is drawn paler.
pub fn decided_chart(frame: Frame, spans: &[Span], legend_items: &[(String, String)]) -> String {
    let mut f = frame;
    let n = spans.len().max(1) as f64;
    f.y = (0.0, n);
    let s = Scale { f };
    let mut out = String::new();
    open(&mut out, &s);
    let row = (s.f.size.1 - TOP - BOTTOM) / n;
    for (i, sp) in spans.iter().enumerate() {
        let y = TOP + row * i as f64;
        let hgt = (row * 0.8).max(0.6);
        let x0 = s.px(0.0);
        match sp.decided {
            Some(d) => {
                let xd = s.px(d);
                let _ = write!(
                    out,
                    r#"<g><title>{}</title><rect x="{x0:.1}" y="{y:.2}" width="{:.1}" height="{hgt:.2}" fill="{c}"/><rect x="{xd:.1}" y="{y:.2}" width="{:.1}" height="{hgt:.2}" fill="{c}" fill-opacity="0.3"/></g>"#,
                    escape(&sp.label),
                    (xd - x0).max(0.0),
                    (s.px(sp.length) - xd).max(0.0),
                    c = sp.color
                );
            }
            None => {
                let _ = write!(
                    out,
                    r##"<g><title>{}</title><rect x="{x0:.1}" y="{y:.2}" width="{:.1}" height="{hgt:.2}" fill="#888" fill-opacity="0.5"/></g>"##,
                    escape(&sp.label),
                    (s.px(sp.length) - x0).max(0.0)
                );
            }
        }
    }
    references(&mut out, &s);
    let items: Vec<(&str, &str, bool)> = legend_items
        .iter()
        .map(|(n, c)| (n.as_str(), c.as_str(), false))
        .collect();
    legend(&mut out, &s, &items);
    out.push_str("</svg>");
    out
}

/// A histogram of values into `bins` equal bins over `range`.
pub fn histogram(frame: Frame, values: &[f64], bins: usize, color: &str) -> String {
    let bins = bins.max(1);
    let (lo, hi) = frame.x;
    let mut counts = vec![0usize; bins];
    for &v in values {
        if v.is_finite() {
            let b = (((v - lo) / (hi - lo)) * bins as f64)
                .floor()
                .clamp(0.0, bins as f64 - 1.0) as usize;
            counts[b] += 1;
        }
    }
    let max = counts.iter().copied().max().unwrap_or(1).max(1) as f64;
    let mut f = frame;
    f.y = (0.0, max * 1.1);
    let s = Scale { f };
    let mut out = String::new();
    open(&mut out, &s);
    let width = (hi - lo) / bins as f64;
    for (b, &c) in counts.iter().enumerate() {
        let x0 = s.px(lo + width * b as f64);
        let x1 = s.px(lo + width * (b + 1) as f64);
        let y = s.py(c as f64);
        let _ = write!(
            out,
            r#"<rect x="{:.1}" y="{y:.1}" width="{:.1}" height="{:.1}" fill="{color}"><title>{:.2}–{:.2}: {c}</title></rect>"#,
            x0 + 0.5,
            (x1 - x0 - 1.0).max(0.5),
            s.py(0.0) - y,
            lo + width * b as f64,
            lo + width * (b + 1) as f64
        );
    }
    references(&mut out, &s);
    out.push_str("</svg>");
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_round_and_cover_the_range() {
        let t = ticks((0.0, 1.0), 5);
        let want = [0.0, 0.2, 0.4, 0.6, 0.8, 1.0];
        assert_eq!(t.len(), want.len());
        assert!(
            t.iter().zip(want).all(|(a, b)| (a - b).abs() < 1e-12),
            "{t:?}"
        );
        assert_eq!(
            ticks((0.0, 80.0), 8),
            vec![0.0, 10.0, 20.0, 30.0, 40.0, 50.0, 60.0, 70.0, 80.0]
        );
    }

    #[test]
    fn chart_text_from_input_is_escaped() {
        let frame = Frame::new("<b>t</b>", "x", "y", (0.0, 1.0), (0.0, 1.0));
        let svg = line_chart(
            frame,
            &[Series {
                name: "<script>".into(),
                points: vec![(0.0, 0.0), (1.0, 1.0)],
                color: PALETTE[0].into(),
                dashed: false,
            }],
            &[],
        );
        assert!(!svg.contains("<script>"));
        assert!(!svg.contains("<b>"));
        assert!(svg.contains("&lt;script&gt;"));
    }
}
