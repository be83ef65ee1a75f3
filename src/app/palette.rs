//! Colours that colour-blind readers can tell apart (the Okabe–Ito set), with a line style per
//! actor so no chart relies on colour alone.

use egui::Color32;
use egui_plot::LineStyle;

/// Okabe–Ito colours in the order actors get them: blue, orange, bluish green, reddish purple,
/// vermillion, sky blue, yellow, grey. Blue against orange is the pair every common form of
/// colour blindness keeps apart.
const SERIES: [Color32; 8] = [
    Color32::from_rgb(0x00, 0x72, 0xB2),
    Color32::from_rgb(0xE6, 0x9F, 0x00),
    Color32::from_rgb(0x00, 0x9E, 0x73),
    Color32::from_rgb(0xCC, 0x79, 0xA7),
    Color32::from_rgb(0xD5, 0x5E, 0x00),
    Color32::from_rgb(0x56, 0xB4, 0xE9),
    Color32::from_rgb(0xF0, 0xE4, 0x42),
    Color32::from_rgb(0x99, 0x99, 0x99),
];

/// The colour of series `i` (an actor's seat, a route, a set).
pub fn series(i: usize) -> Color32 {
    SERIES[i % SERIES.len()]
}

/// A line style per series, so lines differ in shape as well as colour.
pub fn dash(i: usize) -> LineStyle {
    match i % 3 {
        0 => LineStyle::Solid,
        1 => LineStyle::Dashed { length: 8.0 },
        _ => LineStyle::Dotted { spacing: 5.0 },
    }
}

/// Neutral grey for draws, "not decided" and reference lines.
pub fn neutral(dark: bool) -> Color32 {
    if dark {
        Color32::from_gray(170)
    } else {
        Color32::from_gray(90)
    }
}

/// The threshold line and other rule marks.
pub fn rule(dark: bool) -> Color32 {
    if dark {
        Color32::from_gray(200)
    } else {
        Color32::from_gray(60)
    }
}

/// Highlight of the turn in focus (sky blue, readable on both themes).
pub fn focus() -> Color32 {
    Color32::from_rgb(0x56, 0xB4, 0xE9)
}

/// A translucent version of a colour for interval bands.
pub fn band(c: Color32) -> Color32 {
    Color32::from_rgba_unmultiplied(c.r(), c.g(), c.b(), 60)
}

/// Text colour for warnings (vermillion: distinct from the blue of normal highlights).
pub fn warn() -> Color32 {
    Color32::from_rgb(0xD5, 0x5E, 0x00)
}
