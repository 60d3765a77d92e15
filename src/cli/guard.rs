//! Guards of the command line: flag errors as one line, and a run whose
//! expected work is enormous announced before it starts and refused without
//! `--yes`. The estimate itself is `busyhour::experiment::work`.

use super::ReplicationArgs;
use anyhow::{Result, bail};
use busyhour::experiment::size;
use busyhour::experiment::sweep::Sweep;
use busyhour::experiment::work::{self, WorkEstimate};
use busyhour::scenario::{Model, Replications};
use clap::Parser;
use clap::error::ErrorKind;

/// Above this estimate (s) the estimate is printed to stderr before the run.
pub const NOTICE_S: f64 = 10.0;
/// Above this estimate (s) the run needs `--yes`: ten minutes.
pub const CONFIRM_S: f64 = 600.0;

/// Parse the command line; a bad flag prints one line and exits with 2
/// (help and version print as usual and exit 0).
pub fn parse_args<P: Parser>() -> P {
    match P::try_parse() {
        Ok(p) => p,
        Err(e) if matches!(e.kind(), ErrorKind::DisplayHelp | ErrorKind::DisplayVersion) => {
            e.exit()
        }
        Err(e) => {
            let args: Vec<String> = std::env::args().skip(1).collect();
            let command = command_path(&P::command(), &args);
            eprintln!("busyhour: {}", one_line(&e, &command));
            std::process::exit(2);
        }
    }
}

/// The (sub)command the arguments name, e.g. "busyhour calc loss": the
/// leading arguments that are subcommand names, flags skipped.
fn command_path(root: &clap::Command, args: &[String]) -> String {
    let mut path = vec![root.get_name().to_string()];
    let mut command = root;
    for arg in args {
        if let Some(sub) = command.find_subcommand(arg) {
            path.push(sub.get_name().to_string());
            command = sub;
        } else if !arg.starts_with('-') {
            break;
        }
    }
    path.join(" ")
}

/// clap's message without the usage block, on one line, pointing at the
/// help of `command`.
fn one_line(e: &clap::Error, command: &str) -> String {
    let text = e.render().to_string();
    if e.kind() == ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand {
        return format!("'{command}' needs a command: see '{command} --help'");
    }
    let body: Vec<String> = text
        .split("\n\n")
        .map(|p| p.split_whitespace().collect::<Vec<_>>().join(" "))
        .filter(|p| {
            !p.is_empty() && !p.starts_with("Usage:") && !p.starts_with("For more information")
        })
        .collect();
    let message = body.join("; ");
    let message = message.strip_prefix("error: ").unwrap_or(&message);
    format!("{message} (see '{command} --help')")
}

/// An error message on one line: line breaks and other control characters
/// (from a file name or a flag's text) escaped.
pub fn printable(message: &str) -> String {
    message
        .chars()
        .flat_map(|c| {
            let escaped: Vec<char> = if c.is_control() {
                c.escape_default().collect()
            } else {
                vec![c]
            };
            escaped
        })
        .collect()
}

/// A duration in words for a message: "40 s", "12 min", "3.5 h", "2.1 days".
pub fn human(seconds: f64) -> String {
    if seconds < 90.0 {
        format!("{seconds:.0} s")
    } else if seconds < 90.0 * 60.0 {
        format!("{:.0} min", seconds / 60.0)
    } else if seconds < 48.0 * 3600.0 {
        format!("{:.1} h", seconds / 3600.0)
    } else {
        format!("{:.1} days", seconds / 86400.0)
    }
}

/// Announce a long run on stderr (above [`NOTICE_S`], unless `quiet`) and
/// refuse one above [`CONFIRM_S`] unless `yes`: a one-line error naming the
/// estimate and saying "add --yes to run anyway" (exit status 2).
pub fn confirm(estimate: &WorkEstimate, yes: bool, quiet: bool) -> Result<()> {
    let said = format!(
        "about {:.2e} simulation events, up to {} on this machine",
        estimate.events,
        human(estimate.seconds)
    );
    if estimate.seconds > CONFIRM_S && !yes {
        bail!(
            "this run is large: {said} (more than {}): add --yes to run anyway, or shorten it (fewer replications, a shorter length)",
            human(CONFIRM_S)
        );
    }
    if estimate.seconds > NOTICE_S && !quiet {
        eprintln!("busyhour: {said}");
    }
    Ok(())
}

fn cores(reps: &ReplicationArgs) -> usize {
    reps.threads
        .map_or_else(work::machine_cores, |t| t as usize)
        .min(work::machine_cores().max(1))
}

/// `run`: the whole run.
pub fn check_run(
    model: &Model,
    replications: Option<&Replications>,
    reps: &ReplicationArgs,
    quiet: bool,
) -> Result<()> {
    let plan = replications.unwrap_or(&model.plan.replications);
    confirm(
        &work::estimate_on(model, plan, cores(reps)),
        reps.yes,
        quiet,
    )
}

/// `size`: the library's estimate of a search ([`size::work_estimate`]).
pub fn check_size(
    model: &Model,
    plan: &Replications,
    reps: &ReplicationArgs,
    quiet: bool,
) -> Result<()> {
    confirm(
        &size::work_estimate(model, plan, cores(reps)),
        reps.yes,
        quiet,
    )
}

/// `sweep`: the sum over the steps.
pub fn check_sweep(
    model: &Model,
    sweep: &Sweep,
    plan: &Replications,
    reps: &ReplicationArgs,
    quiet: bool,
) -> Result<()> {
    let total = (0..sweep.values().len()).try_fold(WorkEstimate::ZERO, |acc, i| {
        let step = sweep.model_at(model, i)?;
        anyhow::Ok(acc.plus(work::estimate_on(&step, plan, cores(reps))))
    })?;
    confirm(&total, reps.yes, quiet)
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    /// A small command line shaped like busyhour's, for the flag errors.
    #[derive(Parser, Debug)]
    #[command(name = "busyhour")]
    struct Demo {
        #[command(subcommand)]
        command: DemoCommand,
    }

    #[derive(clap::Subcommand, Debug)]
    enum DemoCommand {
        Run {
            scenario: String,
            #[arg(long, value_parser = clap::value_parser!(u32).range(1..=8))]
            threads: Option<u32>,
        },
        Calc {
            #[command(subcommand)]
            what: CalcWhat,
        },
    }

    #[derive(clap::Subcommand, Debug)]
    enum CalcWhat {
        Loss {
            #[arg(long)]
            traffic: f64,
        },
    }

    fn error_line(args: &[&str]) -> String {
        let argv: Vec<String> = args.iter().map(|a| a.to_string()).collect();
        let e = Demo::try_parse_from(std::iter::once("busyhour").chain(args.iter().copied()))
            .expect_err("these arguments are bad");
        one_line(&e, &command_path(&Demo::command(), &argv))
    }

    #[test]
    fn flag_errors_are_one_line_and_name_the_command() {
        let cases: [(&[&str], &str); 6] = [
            (
                &["run", "a.toml", "--threads", "0"],
                "invalid value '0' for '--threads <THREADS>': 0 is not in 1..=8 (see 'busyhour run --help')",
            ),
            (
                &["run"],
                "the following required arguments were not provided: <SCENARIO> (see 'busyhour run --help')",
            ),
            (
                &["calc", "loss", "--traffic", "x"],
                "invalid value 'x' for '--traffic <TRAFFIC>': invalid float literal (see 'busyhour calc loss --help')",
            ),
            (
                &["calc"],
                "'busyhour calc' needs a command: see 'busyhour calc --help'",
            ),
            (
                &["frob"],
                "unrecognized subcommand 'frob' (see 'busyhour --help')",
            ),
            (
                &["run", "a.toml", "--frob"],
                "unexpected argument '--frob' found; tip: to pass '--frob' as a value, use '-- --frob' (see 'busyhour run --help')",
            ),
        ];
        for (args, want) in cases {
            let got = error_line(args);
            assert_eq!(got, want, "{args:?}");
            assert!(!got.contains('\n'));
        }
    }

    #[test]
    fn a_large_run_is_announced_and_a_huge_one_needs_yes() {
        let small = WorkEstimate {
            events: 1e6,
            seconds: 0.25,
        };
        let long = WorkEstimate {
            events: 4e8,
            seconds: 100.0,
        };
        let huge = WorkEstimate {
            events: 1e11,
            seconds: 25_000.0,
        };
        assert!(confirm(&small, false, false).is_ok());
        assert!(confirm(&long, false, false).is_ok());
        assert!(confirm(&long, false, true).is_ok());
        let refused = confirm(&huge, false, false).expect_err("needs --yes");
        let text = format!("{refused:#}");
        assert!(text.contains("add --yes to run anyway"), "{text}");
        assert!(text.contains("6.9 h"), "{text}");
        assert!(text.contains("1.00e11 simulation events"), "{text}");
        assert!(!text.contains('\n'));
        assert!(confirm(&huge, true, true).is_ok());
    }

    #[test]
    fn durations_in_words() {
        assert_eq!(human(40.0), "40 s");
        assert_eq!(human(600.0), "10 min");
        assert_eq!(human(25_000.0), "6.9 h");
        assert_eq!(human(3.0 * 86400.0), "3.0 days");
    }
}
