//! The Roster: every session of a set in one sortable, filterable table. Up/down move the
//! selection, Enter or a double click opens the session in the Replay.

use super::table::{self, Column, Sort};
use crate::app::facts::SessionFacts;
use egui::Ui;
use std::cmp::Ordering;
use tellturn::sessions::SessionSet;

const ROW_HEIGHT: f32 = 20.0;

const COLUMNS: [Column; 9] = [
    Column {
        title: "Session",
        width: 130.0,
        numeric: false,
        help: "The session id as written in the log.",
    },
    Column {
        title: "Variant",
        width: 70.0,
        numeric: false,
        help: "The rule variant recorded in the outcomes file.",
    },
    Column {
        title: "Winner",
        width: 100.0,
        numeric: false,
        help: "Who won; \"draw\", or \"in progress\" while the session is still being played.",
    },
    Column {
        title: "Route",
        width: 100.0,
        numeric: false,
        help: "How it was won (the victory route), when the log records it.",
    },
    Column {
        title: "Turns",
        width: 55.0,
        numeric: true,
        help: "How many turns the session lasted.",
    },
    Column {
        title: "Decided at",
        width: 80.0,
        numeric: true,
        help: "The decided turn: from this turn on, the eventual winner's win chance stayed at or above the threshold (top bar) until the end. \"never\": the result was never that clear (or it was a draw).",
    },
    Column {
        title: "Settled",
        width: 70.0,
        numeric: true,
        help: "Settled share: the share of the session's turns played after it was decided. High values mean long stretches where the result was no longer in doubt.",
    },
    Column {
        title: "Excitement",
        width: 85.0,
        numeric: true,
        help: "Excitement: how much the win chances moved in total (every turn's swings added up, per player). Higher means a more back-and-forth game.",
    },
    Column {
        title: "Comeback",
        width: 80.0,
        numeric: true,
        help: "Yes when the winner's win chance fell to 20 % or lower at some turn and they still won.",
    },
];

/// Which sessions the Roster lists.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Show {
    All,
    Finished,
    InProgress,
}

/// What the user asked for in the Roster.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RosterAction {
    /// Nothing.
    None,
    /// Open this session (index in its set) in the Replay.
    Open(usize),
}

/// The session table's own state: sort, filter, and the cached row order.
pub struct Roster {
    sort: Sort,
    filter: String,
    show: Show,
    order: Vec<usize>,
    cache_key: Option<(u64, u64, Sort, String, Show)>,
    scroll_to: Option<usize>,
    offset: f32,
}

impl Default for Roster {
    fn default() -> Self {
        Self {
            sort: Sort {
                column: 0,
                ascending: true,
            },
            filter: String::new(),
            show: Show::All,
            order: Vec::new(),
            cache_key: None,
            scroll_to: None,
            offset: 0.0,
        }
    }
}

fn cells(set: &SessionSet, facts: &[SessionFacts], k: usize) -> Vec<String> {
    let s = &set.sessions[k];
    let f = facts.get(k);
    vec![
        s.id.clone(),
        s.variant().unwrap_or("").to_string(),
        s.winner_name().to_string(),
        s.victory().unwrap_or("").to_string(),
        s.turn_count().to_string(),
        // "never" only once there are chances to judge by: before training it is unknown.
        match (s.is_finished(), f.and_then(|f| f.decided_turn)) {
            (_, Some(t)) => t.to_string(),
            (true, None) if f.is_some_and(|f| f.trace.is_some()) => "never".to_string(),
            _ => String::new(),
        },
        f.and_then(|f| f.settled_share)
            .map(|x| format!("{:.0} %", 100.0 * x))
            .unwrap_or_default(),
        f.and_then(|f| f.excitement)
            .map(|x| format!("{x:.2}"))
            .unwrap_or_default(),
        match f {
            Some(f) if f.in_progress || f.trace.is_none() => String::new(),
            Some(f) if f.comeback => "yes".into(),
            Some(_) => "no".into(),
            None => String::new(),
        },
    ]
}

fn compare(
    set: &SessionSet,
    facts: &[SessionFacts],
    column: usize,
    a: usize,
    b: usize,
) -> Ordering {
    let (sa, sb) = (&set.sessions[a], &set.sessions[b]);
    let (fa, fb) = (facts.get(a), facts.get(b));
    let num = |x: Option<f64>, y: Option<f64>| match (x, y) {
        (Some(x), Some(y)) => x.partial_cmp(&y).unwrap_or(Ordering::Equal),
        (Some(_), None) => Ordering::Less,
        (None, Some(_)) => Ordering::Greater,
        (None, None) => Ordering::Equal,
    };
    match column {
        0 => natural(&sa.id, &sb.id),
        1 => sa.variant().cmp(&sb.variant()),
        2 => sa.winner_name().cmp(sb.winner_name()),
        3 => sa.victory().cmp(&sb.victory()),
        4 => sa.turn_count().cmp(&sb.turn_count()),
        5 => num(
            fa.and_then(|f| f.decided_turn).map(f64::from),
            fb.and_then(|f| f.decided_turn).map(f64::from),
        ),
        6 => num(
            fa.and_then(|f| f.settled_share),
            fb.and_then(|f| f.settled_share),
        ),
        7 => num(fa.and_then(|f| f.excitement), fb.and_then(|f| f.excitement)),
        _ => fa.map(|f| f.comeback).cmp(&fb.map(|f| f.comeback)),
    }
}

/// Compare ids so that `s2` sorts before `s10`.
fn natural(a: &str, b: &str) -> Ordering {
    let split = |s: &str| {
        let digits = s.len() - s.trim_end_matches(|c: char| c.is_ascii_digit()).len();
        let (head, tail) = s.split_at(s.len() - digits);
        (head.to_string(), tail.parse::<u64>().ok())
    };
    let (ha, na) = split(a);
    let (hb, nb) = split(b);
    ha.cmp(&hb).then(na.cmp(&nb)).then(a.cmp(b))
}

impl Roster {
    /// The rows in display order (after filtering and sorting), for CSV export. The order is
    /// brought up to date first: the set may have changed since the table was last drawn.
    pub fn csv(
        &mut self,
        set: &SessionSet,
        facts: &[SessionFacts],
        set_id: u64,
        generation: u64,
    ) -> String {
        self.refresh(set, facts, set_id, generation);
        let headers: Vec<&str> = COLUMNS.iter().map(|c| c.title).collect();
        table::to_csv(&headers, self.order.iter().map(|&k| cells(set, facts, k)))
    }

    /// Move the selection `delta` rows through the current order.
    fn step(&mut self, selected: &mut Option<usize>, delta: isize) {
        if self.order.is_empty() {
            return;
        }
        let pos = selected
            .and_then(|k| self.order.iter().position(|&x| x == k))
            .map(|p| p as isize + delta)
            .unwrap_or(0)
            .clamp(0, self.order.len() as isize - 1) as usize;
        *selected = Some(self.order[pos]);
        self.scroll_to = Some(pos);
    }

    fn refresh(&mut self, set: &SessionSet, facts: &[SessionFacts], set_id: u64, generation: u64) {
        let key = (
            set_id,
            generation,
            self.sort,
            self.filter.clone(),
            self.show,
        );
        if self.cache_key.as_ref() == Some(&key) {
            return;
        }
        let needle = self.filter.to_lowercase();
        let mut order: Vec<usize> = (0..set.sessions.len())
            .filter(|&k| {
                let s = &set.sessions[k];
                let shown = match self.show {
                    Show::All => true,
                    Show::Finished => s.is_finished(),
                    Show::InProgress => !s.is_finished(),
                };
                shown
                    && (needle.is_empty()
                        || s.id.to_lowercase().contains(&needle)
                        || s.winner_name().to_lowercase().contains(&needle)
                        || s.victory()
                            .is_some_and(|v| v.to_lowercase().contains(&needle))
                        || s.variant()
                            .is_some_and(|v| v.to_lowercase().contains(&needle))
                        || s.actors.iter().any(|a| a.to_lowercase().contains(&needle)))
            })
            .collect();
        let column = self.sort.column;
        order.sort_by(|&a, &b| {
            let o = compare(set, facts, column, a, b);
            let o = if self.sort.ascending { o } else { o.reverse() };
            o.then(a.cmp(&b))
        });
        self.order = order;
        self.cache_key = Some(key);
    }

    /// Draw the table; `selected` is the selected session (index in its set).
    #[allow(clippy::too_many_arguments)]
    pub fn ui(
        &mut self,
        ui: &mut Ui,
        set: &SessionSet,
        facts: &[SessionFacts],
        set_id: u64,
        generation: u64,
        selected: &mut Option<usize>,
        keys_free: bool,
    ) -> RosterAction {
        let mut action = RosterAction::None;
        ui.horizontal(|ui| {
            let find = ui.label("Find:");
            ui.add(
                egui::TextEdit::singleline(&mut self.filter)
                    .hint_text("id, player, winner, route or variant")
                    .desired_width(220.0),
            )
            .labelled_by(find.id)
            .on_hover_text("Show only sessions whose id, players, winner, route or variant contain this text.");
            ui.separator();
            ui.selectable_value(&mut self.show, Show::All, "all");
            ui.selectable_value(&mut self.show, Show::Finished, "finished");
            ui.selectable_value(&mut self.show, Show::InProgress, "in progress")
                .on_hover_text("Sessions with no outcome yet: their chances are scored by the trained model as the log grows.");
        });
        self.refresh(set, facts, set_id, generation);
        ui.label(format!(
            "{} of {} sessions shown · ↑/↓ move · Enter or double-click opens the Replay",
            self.order.len(),
            set.sessions.len()
        ));
        if keys_free {
            let (up, down, enter, pgup, pgdn) = ui.input(|i| {
                (
                    i.key_pressed(egui::Key::ArrowUp),
                    i.key_pressed(egui::Key::ArrowDown),
                    i.key_pressed(egui::Key::Enter),
                    i.key_pressed(egui::Key::PageUp),
                    i.key_pressed(egui::Key::PageDown),
                )
            });
            if up {
                self.step(selected, -1);
            }
            if down {
                self.step(selected, 1);
            }
            if pgup {
                self.step(selected, -20);
            }
            if pgdn {
                self.step(selected, 20);
            }
            if enter && let Some(k) = *selected {
                action = RosterAction::Open(k);
            }
        }
        egui::ScrollArea::horizontal()
            .id_salt("roster-h")
            .show(ui, |ui| {
                if let Some(sort) = table::header(ui, &COLUMNS, self.sort) {
                    self.sort = sort;
                }
                ui.separator();
                let spacing = ui.spacing().item_spacing.y;
                let mut area = egui::ScrollArea::vertical()
                    .id_salt("roster-v")
                    .auto_shrink([false, false]);
                if let Some(pos) = self.scroll_to.take() {
                    let step = ROW_HEIGHT + spacing;
                    let view = ui.available_height();
                    let offset_now = self.offset;
                    let top = pos as f32 * step;
                    if top < offset_now || top + step > offset_now + view - 4.0 {
                        area = area.vertical_scroll_offset((top - view / 2.0).max(0.0));
                    }
                }
                let out = area.show_rows(ui, ROW_HEIGHT, self.order.len(), |ui, range| {
                    for pos in range {
                        let k = self.order[pos];
                        let c = cells(set, facts, k);
                        let label = format!("session {} won by {}", c[0], c[2]);
                        let r =
                            table::row(ui, &COLUMNS, &c, ROW_HEIGHT, *selected == Some(k), &label);
                        if r.clicked() {
                            *selected = Some(k);
                        }
                        if r.double_clicked() {
                            action = RosterAction::Open(k);
                        }
                    }
                });
                self.offset = out.state.clamped_offset().y;
            });
        action
    }
}
