//! Colours that colour-blind readers can tell apart (the Okabe–Ito set), with a line style per
//! actor so no chart relies on colour alone. On the light theme the pale members of the set are
//! darkened (same hue) so every line keeps at least 3:1 contrast against the background.

use egui::Color32;
use egui_plot::LineStyle;

/// Okabe–Ito colours in the order actors get them: blue, orange, bluish green, reddish purple,
/// vermillion, sky blue, yellow, grey. Blue against orange is the pair every common form of
/// colour blindness keeps apart.
const SERIES_DARK: [Color32; 8] = [
    Color32::from_rgb(0x00, 0x72, 0xB2),
    Color32::from_rgb(0xE6, 0x9F, 0x00),
    Color32::from_rgb(0x00, 0x9E, 0x73),
    Color32::from_rgb(0xCC, 0x79, 0xA7),
    Color32::from_rgb(0xD5, 0x5E, 0x00),
    Color32::from_rgb(0x56, 0xB4, 0xE9),
    Color32::from_rgb(0xF0, 0xE4, 0x42),
    Color32::from_rgb(0x99, 0x99, 0x99),
];

/// The same colours for the light theme: orange, reddish purple, sky blue, yellow and grey
/// darkened (their relative luminance scaled down) to reach 3:1 against white.
const SERIES_LIGHT: [Color32; 8] = [
    Color32::from_rgb(0x00, 0x72, 0xB2),
    Color32::from_rgb(0xBD, 0x82, 0x00),
    Color32::from_rgb(0x00, 0x9E, 0x73),
    Color32::from_rgb(0xC4, 0x74, 0xA0),
    Color32::from_rgb(0xD5, 0x5E, 0x00),
    Color32::from_rgb(0x46, 0x95, 0xC2),
    Color32::from_rgb(0x98, 0x90, 0x26),
    Color32::from_rgb(0x8D, 0x8D, 0x8D),
];

/// How many distinct series colours there are before they repeat.
#[cfg_attr(not(test), allow(dead_code))]
pub const SERIES_COUNT: usize = SERIES_DARK.len();

/// The colour of series `i` (an actor's seat, a route, a set) on the dark or light theme.
pub fn series(dark: bool, i: usize) -> Color32 {
    if dark {
        SERIES_DARK[i % SERIES_DARK.len()]
    } else {
        SERIES_LIGHT[i % SERIES_LIGHT.len()]
    }
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

/// Highlight of the turn in focus (sky blue).
pub fn focus(dark: bool) -> Color32 {
    series(dark, 5)
}

/// A translucent version of a colour for interval bands.
pub fn band(c: Color32) -> Color32 {
    Color32::from_rgba_unmultiplied(c.r(), c.g(), c.b(), 60)
}

/// Text colour for warnings (vermillion: distinct from the blue of normal highlights), with
/// at least 4.5:1 contrast against the panels of either theme.
pub fn warn(dark: bool) -> Color32 {
    if dark {
        Color32::from_rgb(0xE0, 0x66, 0x10)
    } else {
        Color32::from_rgb(0xB8, 0x4F, 0x00)
    }
}

/// WCAG contrast ratio of two opaque colours (1 = none, 21 = black on white).
#[cfg_attr(not(test), allow(dead_code))]
pub fn contrast(a: Color32, b: Color32) -> f64 {
    fn luminance(c: Color32) -> f64 {
        let lin = |v: u8| {
            let v = v as f64 / 255.0;
            if v <= 0.04045 {
                v / 12.92
            } else {
                ((v + 0.055) / 1.055).powf(2.4)
            }
        };
        0.2126 * lin(c.r()) + 0.7152 * lin(c.g()) + 0.0722 * lin(c.b())
    }
    let (la, lb) = (luminance(a), luminance(b));
    (la.max(lb) + 0.05) / (la.min(lb) + 0.05)
}
