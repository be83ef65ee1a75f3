//! The dashboard's views: one file and one struct each, drawing what they are given.

pub mod decided;
pub mod fairness;
pub mod model_check;
pub mod replay;
pub mod roster;
pub mod side_by_side;
pub mod swing_makers;
pub mod table;

use egui_plot::{Plot, PlotResponse, PlotUi};

/// Show a plot and return, besides its response, its whole rectangle: the plot area with its
/// axes and their numbers, which is what a chart export saves (the response covers only the
/// area inside the axes).
pub fn show_plot<'a, R>(
    ui: &mut egui::Ui,
    plot: Plot<'a>,
    build: impl FnOnce(&mut PlotUi<'a>) -> R + 'a,
) -> (PlotResponse<R>, egui::Rect) {
    let scoped = ui.scope(|ui| plot.show(ui, build));
    (scoped.inner, scoped.response.rect)
}
