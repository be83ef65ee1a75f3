//! `tellturn report`: train with cross-fitting, analyse, and write the report folder.

use super::progress::{StderrProgress, ctrl_c_cancel};
use super::{ReportArgs, load_sets};
use std::time::Instant;
use tellturn::report::write_report;
use tellturn::study::{StudyOptions, run_study};

/// Run `report`.
pub fn run(args: &ReportArgs) -> anyhow::Result<i32> {
    let started = Instant::now();
    let progress = StderrProgress::new(args.quiet);
    let cancel = ctrl_c_cancel();
    if !(0.5..1.0).contains(&args.threshold) {
        anyhow::bail!(
            "--threshold must be at least 0.5 and below 1 (got {})",
            args.threshold
        );
    }
    // Refuse an output inside an input folder before any work is done.
    let roots: Vec<std::path::PathBuf> = args
        .sets
        .iter()
        .chain(&args.vs)
        .map(|p| {
            if p.is_file() {
                p.parent().map(|x| x.to_path_buf()).unwrap_or_default()
            } else {
                p.clone()
            }
        })
        .collect();
    tellturn::report::check_output_dir(&roots, &args.out)?;
    let a = load_sets(&args.sets, &progress)?;
    let b = load_sets(&args.vs, &progress)?;
    let mut train = args.train.options();
    train.cross_fit = true;
    let options = StudyOptions {
        train,
        threshold: args.threshold,
        bootstrap: args.bootstrap,
        split_variants: !args.no_variant_split,
        ..StudyOptions::default()
    };
    let study = run_study(a, b, &options, &progress, &cancel)?;
    let written = write_report(&study, &args.out, &progress, &cancel)?;
    progress.finish();
    println!("Findings");
    for f in study.findings.headlines.iter() {
        println!("  • {}", f.text);
    }
    if let Some(c) = &study.comparison {
        println!("Comparison ({} against {})", c.b.name, c.a.name);
        for v in &c.verdicts {
            println!("  • {v}");
        }
    }
    for n in &study.notes {
        println!("note: {n}");
    }
    println!("wrote {} files to {}:", written.len(), args.out.display());
    for w in &written {
        println!("  {}", w.display());
    }
    if args.train.timings {
        for side in &study.sides {
            let t = &side.training.timings;
            println!(
                "timings {}: features {:.2} s, fit {:.2} s, scoring {:.2} s, training total {:.2} s",
                side.name, t.features, t.fit, t.score, t.total
            );
        }
        println!("total {:.2} s", started.elapsed().as_secs_f64());
    }
    Ok(0)
}
