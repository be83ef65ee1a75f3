//! `tellturn check`: describe session sets and list their problems.

use std::fmt::Write as _;
use tellturn::sessions::{Problem, SetSummary, Severity, load_set, summarize};

use super::CheckArgs;

/// Problems listed per kind before the rest are only counted.
const LIST_PER_KIND: usize = 8;

/// Run `check`; returns the process exit code (0 when every set is usable).
pub fn run(args: &CheckArgs) -> anyhow::Result<i32> {
    let mut summaries = Vec::new();
    for path in &args.sets {
        let set = load_set(path);
        summaries.push(summarize(&set));
    }
    if args.json {
        let json = serde_json::to_string_pretty(&summaries)?;
        println!("{json}");
    } else {
        for s in &summaries {
            print!("{}", render(s));
        }
    }
    Ok(if summaries.iter().all(|s| s.usable) {
        0
    } else {
        1
    })
}

fn percent(n: usize, total: usize) -> String {
    if total == 0 {
        "–".into()
    } else {
        format!("{:.1} %", 100.0 * n as f64 / total as f64)
    }
}

fn counts(map: &std::collections::BTreeMap<String, usize>) -> String {
    if map.is_empty() {
        return "not recorded".into();
    }
    let mut items: Vec<(&String, &usize)> = map.iter().collect();
    items.sort_by(|a, b| b.1.cmp(a.1).then(a.0.cmp(b.0)));
    items
        .iter()
        .map(|(k, n)| format!("{k} {n}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The text report for one set.
pub fn render(s: &SetSummary) -> String {
    let mut out = String::new();
    let verdict = if s.usable { "usable" } else { "NOT USABLE" };
    let _ = writeln!(out, "== {} ({})  [{verdict}]", s.name, s.root.display());
    let _ = writeln!(
        out,
        "  sessions       {} finished, {} in progress, {} set aside",
        s.finished, s.in_progress, s.set_aside
    );
    let actors: Vec<String> = s
        .actors_per_session
        .iter()
        .map(|(k, n)| format!("{k} actors in {n}"))
        .collect();
    let _ = writeln!(
        out,
        "  actors         {}",
        if actors.is_empty() {
            "–".into()
        } else {
            actors.join(", ")
        }
    );
    let _ = writeln!(
        out,
        "  turns          median {}, range {}–{}",
        s.turns_median, s.turns_min, s.turns_max
    );
    let _ = writeln!(out, "  event rows     {}", s.event_rows);
    let _ = writeln!(out, "  event labels   {} distinct", s.event_labels);
    let _ = writeln!(out, "  detail words   {} distinct", s.detail_tokens);
    let mut winners: Vec<String> = s
        .wins_by_seat
        .iter()
        .map(|(seat, n)| {
            let who = if *seat == 1 {
                "seat 1 (moved first)".to_string()
            } else {
                format!("seat {seat}")
            };
            format!("{who} {n} ({})", percent(*n, s.finished))
        })
        .collect();
    winners.push(format!(
        "draws {} ({})",
        s.draws,
        percent(s.draws, s.finished)
    ));
    let _ = writeln!(out, "  winners        {}", winners.join(", "));
    let _ = writeln!(out, "  victory routes {}", counts(&s.victory_routes));
    let _ = writeln!(out, "  variants       {}", counts(&s.variants));
    let _ = writeln!(
        out,
        "  state columns  {}",
        if s.state_columns.is_empty() {
            "none".into()
        } else {
            s.state_columns.join(", ")
        }
    );
    out.push_str(&render_problems(&s.problems));
    out.push('\n');
    out
}

/// Problems grouped by severity and kind, capped per kind with a count of the rest.
pub fn render_problems(problems: &[Problem]) -> String {
    let mut out = String::new();
    if problems.is_empty() {
        out.push_str("  problems       none\n");
        return out;
    }
    let count = |sev: Severity| problems.iter().filter(|p| p.severity == sev).count();
    let _ = writeln!(
        out,
        "  problems       {} unusable, {} session(s) set aside, {} warning(s)",
        count(Severity::Unusable),
        count(Severity::SetAside),
        count(Severity::Warning)
    );
    for sev in [Severity::Unusable, Severity::SetAside, Severity::Warning] {
        let mut kinds: Vec<&'static str> = Vec::new();
        for p in problems.iter().filter(|p| p.severity == sev) {
            if !kinds.contains(&p.kind) {
                kinds.push(p.kind);
            }
        }
        for kind in kinds {
            let of_kind: Vec<&Problem> = problems
                .iter()
                .filter(|p| p.severity == sev && p.kind == kind)
                .collect();
            let _ = writeln!(
                out,
                "  [{}] {} ({}):",
                sev.word(),
                kind.replace('_', " "),
                of_kind.len()
            );
            for p in of_kind.iter().take(LIST_PER_KIND) {
                let _ = writeln!(out, "    {p}");
            }
            if of_kind.len() > LIST_PER_KIND {
                let _ = writeln!(out, "    … and {} more", of_kind.len() - LIST_PER_KIND);
            }
        }
    }
    out
}
