//! A light table for large lists: a header of sort buttons and rows painted directly (only the
//! rows in view are laid out), so 10,000 sessions scroll as fast as 10.

use egui::{Align2, Color32, FontId, Rect, Sense, Ui, Vec2, pos2};

/// One column: its title, width, alignment and what its header's hover help says.
pub struct Column {
    /// Header text.
    pub title: &'static str,
    /// Width in points.
    pub width: f32,
    /// Right-align (numbers) or left-align (text).
    pub numeric: bool,
    /// What the column means, for a newcomer.
    pub help: &'static str,
}

/// Sort state: which column and which way.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Sort {
    /// Column index.
    pub column: usize,
    /// Ascending when true.
    pub ascending: bool,
}

/// Draw the header row; returns the new sort when a header was clicked.
pub fn header(ui: &mut Ui, columns: &[Column], sort: Sort) -> Option<Sort> {
    let mut out = None;
    ui.horizontal(|ui| {
        ui.spacing_mut().item_spacing.x = 0.0;
        for (i, c) in columns.iter().enumerate() {
            let arrow = if sort.column == i {
                if sort.ascending { " ▲" } else { " ▼" }
            } else {
                ""
            };
            let b = egui::Button::new(egui::RichText::new(format!("{}{arrow}", c.title)).strong())
                .frame(false)
                .min_size(Vec2::new(c.width, 0.0));
            let r = ui.add_sized([c.width, 20.0], b).on_hover_text(format!(
                "{}\n\nClick to sort by this column; click again to reverse.",
                c.help
            ));
            if r.clicked() {
                out = Some(Sort {
                    column: i,
                    ascending: if sort.column == i {
                        !sort.ascending
                    } else {
                        true
                    },
                });
            }
        }
    });
    out
}

/// Paint one row of cells; returns its response (click to select). `label` names the row for
/// screen readers.
pub fn row(
    ui: &mut Ui,
    columns: &[Column],
    cells: &[String],
    height: f32,
    selected: bool,
    label: &str,
) -> egui::Response {
    row_coloured(ui, columns, cells, height, selected, label, None)
}

/// [`row`] with an optional text colour (e.g. the actor's), used when the row is not selected.
pub fn row_coloured(
    ui: &mut Ui,
    columns: &[Column],
    cells: &[String],
    height: f32,
    selected: bool,
    label: &str,
    colour: Option<Color32>,
) -> egui::Response {
    let width: f32 = columns.iter().map(|c| c.width).sum();
    let (rect, resp) = ui.allocate_exact_size(Vec2::new(width, height), Sense::click());
    resp.widget_info(|| egui::WidgetInfo::selected(egui::Role::Row, true, selected, label));
    if ui.is_rect_visible(rect) {
        let visuals = ui.visuals();
        let fill = if selected {
            visuals.selection.bg_fill
        } else if resp.hovered() {
            visuals.widgets.hovered.weak_bg_fill
        } else {
            Color32::TRANSPARENT
        };
        let text_color = if selected {
            visuals.selection.stroke.color
        } else {
            colour.unwrap_or_else(|| visuals.text_color())
        };
        let painter = ui.painter_at(rect);
        painter.rect_filled(rect, 2.0, fill);
        let font = FontId::proportional(13.0);
        let mut x = rect.left();
        for (c, text) in columns.iter().zip(cells) {
            let cell = Rect::from_min_size(pos2(x, rect.top()), Vec2::new(c.width, height));
            let (anchor, at) = if c.numeric {
                (
                    Align2::RIGHT_CENTER,
                    pos2(cell.right() - 8.0, cell.center().y),
                )
            } else {
                (
                    Align2::LEFT_CENTER,
                    pos2(cell.left() + 4.0, cell.center().y),
                )
            };
            painter
                .with_clip_rect(cell)
                .text(at, anchor, text, font.clone(), text_color);
            x += c.width;
        }
    }
    resp
}

/// Quote a CSV field when it needs it.
pub fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// Rows of cells as CSV text with a header line.
pub fn to_csv(headers: &[&str], rows: impl Iterator<Item = Vec<String>>) -> String {
    let mut out = headers
        .iter()
        .map(|h| csv_field(h))
        .collect::<Vec<_>>()
        .join(",");
    out.push('\n');
    for r in rows {
        out.push_str(&r.iter().map(|c| csv_field(c)).collect::<Vec<_>>().join(","));
        out.push('\n');
    }
    out
}
