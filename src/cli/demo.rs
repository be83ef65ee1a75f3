//! `tellturn demo`: write a session set from one of our invented simulators.

use super::DemoArgs;
use super::progress::{StderrProgress, ctrl_c_cancel};
use tellturn::demo::{DemoOptions, Scenario, generate, write_set};

/// Run `demo`.
pub fn run(args: &DemoArgs) -> anyhow::Result<i32> {
    let progress = StderrProgress::new(args.quiet);
    let cancel = ctrl_c_cancel();
    let scenario = Scenario::from_name(&args.scenario)?;
    let mut options = DemoOptions::for_scenario(scenario);
    if let Some(v) = &args.variant {
        options.variant = v.clone();
    }
    if let Some(n) = args.sessions {
        options.sessions = n;
        options.in_progress = options.in_progress.min(n);
    }
    if let Some(n) = args.in_progress {
        options.in_progress = n;
    }
    options.seed = args.seed;
    options.truth = args.truth;
    let set = generate(&options, &progress, &cancel)?;
    write_set(&set, &args.out)?;
    progress.finish();
    let finished = set.outcomes.len();
    println!(
        "wrote {}: {} sessions of `{}` variant {} ({finished} finished, {} in progress), {} event rows{}",
        args.out.display(),
        options.sessions,
        scenario.name(),
        options.variant,
        options.sessions - finished,
        set.events.len(),
        if options.truth {
            format!(", and truth.csv ({})", set.truth_method)
        } else {
            String::new()
        }
    );
    Ok(0)
}
