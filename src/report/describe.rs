//! The scenario in plain words: the compiled model as a reader checks it
//! (groups, streams, laws, routes), for `check` and the HTML pages.

use crate::scenario::{Arrivals, Model, Preemption, Queue, Replications, Start};
use crate::units::{format_duration, format_share, trim_float};

/// How the warm-up was chosen and how replications start, for the run line.
pub(crate) fn warmup_origin(derived: bool, start: Start) -> &'static str {
    match (derived, start) {
        (true, Start::Steady) => " (derived from the laws), steady start",
        (true, Start::Empty) => " (derived from the laws), empty start",
        (false, Start::Steady) => ", steady start",
        (false, Start::Empty) => ", empty start",
    }
}

/// What the figures of a model with forecast uncertainty are, in one line
/// (`None` when every rate is known): averages over the forecast's spread.
pub fn forecast_line(model: &Model) -> Option<String> {
    let parts: Vec<String> = (model.streams.iter())
        .filter_map(|s| {
            let f = s.forecast.as_ref()?;
            let shared = f
                .shared
                .as_ref()
                .map_or(String::new(), |l| format!(", shared factor \"{l}\""));
            Some(format!(
                "{} (cv {}, {}{shared})",
                s.name,
                format_share(f.cv()),
                f.law.name()
            ))
        })
        .collect();
    if parts.is_empty() {
        return None;
    }
    Some(format!(
        "Figures are averaged over the forecast's spread: each replication (a day) multiplies the rate of {} by a random factor of mean 1 drawn for that day",
        parts.join(", ")
    ))
}

/// The compiled model in plain words, for `check`.
pub fn describe_model(model: &Model, file: &str) -> String {
    let p = &model.plan;
    let mut out = format!("{}  ({file})\n", model.title);
    let reps = match &p.replications {
        Replications::Fixed(n) => format!("{n} replications"),
        Replications::Precision { target, max } => {
            format!(
                "replications until key figures are within {} (at most {max})",
                format_share(*target)
            )
        }
    };
    out.push_str(&format!(
        "Run: {reps}, each {} measured after {} warm-up{}, seed {}{}\n",
        format_duration(p.length_s),
        format_duration(p.warmup_s),
        warmup_origin(!p.warmup_given, p.start),
        p.seed,
        p.interval_s.map_or(String::new(), |i| format!(
            ", figures per {}",
            format_duration(i)
        ))
    ));
    if let Some(line) = forecast_line(model) {
        out.push_str(&line);
        out.push('\n');
    }
    out.push_str("\nGroups\n");
    for g in &model.groups {
        let queue = match g.queue {
            Queue::None => "no queue (blocked calls overflow or are cleared)".to_string(),
            Queue::Limited(q) => format!("queue of {q} places"),
            Queue::Unlimited => "unlimited queue".to_string(),
        };
        out.push_str(&format!("  {}: {}, {queue}", g.name, servers_in_words(g)));
        if let Some(a) = g.overflow_after_s {
            out.push_str(&format!(
                ", waiting calls move on after {}",
                format_duration(a)
            ));
        }
        if !g.prefer.is_empty() {
            let names: Vec<&str> = (g.prefer.iter())
                .map(|&s| model.streams[s as usize].name.as_str())
                .collect();
            out.push_str(&format!(
                ", answers waiting calls in the order {}",
                names.join(", ")
            ));
        }
        if let Some(p) = g.preemption {
            out.push_str(match p {
                Preemption::Resume => {
                    ", a call of higher priority interrupts one of lower priority, which resumes later"
                }
                Preemption::Restart => {
                    ", a call of higher priority interrupts one of lower priority, which starts again later"
                }
                Preemption::Lose => {
                    ", a call of higher priority interrupts one of lower priority, which is lost"
                }
            });
        }
        if g.reserve > 0 {
            let names: Vec<&str> = model
                .streams
                .iter()
                .enumerate()
                .filter(|(s, _)| g.reserved_for[*s])
                .map(|(_, s)| s.name.as_str())
                .collect();
            out.push_str(&format!(
                ", last {} servers reserved for {}",
                g.reserve,
                names.join(", ")
            ));
        }
        out.push('\n');
    }
    out.push_str("\nStreams\n");
    for s in &model.streams {
        let arrivals = match &s.arrivals {
            Arrivals::Poisson { rate } => format!("Poisson, {}/h", trim_float(rate * 3600.0, 2)),
            Arrivals::Profile { interval_s, rates } => format!(
                "Poisson peak profile of {} intervals of {}, {}/h to {}/h",
                rates.len(),
                format_duration(*interval_s),
                trim_float(
                    rates.iter().cloned().fold(f64::INFINITY, f64::min) * 3600.0,
                    1
                ),
                trim_float(rates.iter().cloned().fold(0.0, f64::max) * 3600.0, 1)
            ),
            Arrivals::Renewal { between } => {
                format!("renewal, time between calls {}", between.describe())
            }
            Arrivals::Sources { count, idle } => {
                format!("{count} sources, idle time {}", idle.describe())
            }
        };
        let route: Vec<&str> = s
            .route
            .iter()
            .map(|&g| model.groups[g as usize].name.as_str())
            .collect();
        out.push_str(&format!("  {}: {arrivals}\n", s.name));
        match s.offered_traffic(p.length_s) {
            Some(a) => out.push_str(&format!(
                "    offered traffic {} erlangs (first attempts)\n",
                trim_float(a, 3)
            )),
            None => out.push_str("    offered traffic depends on how many sources are idle\n"),
        }
        if s.has_stages() {
            describe_stages(&mut out, model, s);
        } else {
            out.push_str(&format!("    holding {}\n", s.holding.describe()));
            out.push_str(&format!("    route {}", route.join(" -> ")));
            if s.units > 1 {
                out.push_str(&format!(", {} servers per call", s.units));
            }
            out.push('\n');
        }
        if let Some(rt) = &s.retry {
            let chances: Vec<String> = rt.chances.iter().map(|c| format_share(*c)).collect();
            out.push_str(&format!(
                "    redials: chance {}, delay {}, at most {} attempts\n",
                chances.join(" then "),
                rt.delay.describe(),
                rt.max_attempts
            ));
        }
        if let Some(pt) = &s.patience {
            out.push_str(&format!("    patience {}\n", pt.describe()));
        }
        if let Some(pr) = s.priority {
            out.push_str(&format!(
                "    priority {pr} (a lower number is answered first)\n"
            ));
        }
        if !s.seen_by.is_empty() {
            let seen: Vec<String> = (s.seen_by.iter())
                .map(|x| {
                    let name = &model.groups[x.group as usize].name;
                    if x.after_s > 0.0 {
                        format!("{name} after {}", format_duration(x.after_s))
                    } else {
                        format!("{name} at once")
                    }
                })
                .collect();
            out.push_str(&format!(
                "    a waiting call is also seen by {}\n",
                seen.join(", ")
            ));
        }
        if let Some(f) = &s.forecast {
            out.push_str(&format!(
                "    forecast uncertainty: rate times a {} factor of mean 1 and cv {} per day{}\n",
                f.law.name(),
                format_share(f.cv()),
                f.shared
                    .as_ref()
                    .map_or(String::new(), |l| format!(", shared as \"{l}\""))
            ));
        }
        if let Some(aw) = s.answer_within_s {
            out.push_str(&format!(
                "    service level: answered within {}\n",
                format_duration(aw)
            ));
        }
    }
    out
}

/// A group's servers in words: "18 servers", or its schedule with the
/// shrinkage that turns scheduled servers into servers taking calls.
fn servers_in_words(g: &crate::scenario::Group) -> String {
    let Some(s) = &g.schedule else {
        return format!("{} servers", g.servers);
    };
    let list = |xs: &[u32]| xs.iter().map(u32::to_string).collect::<Vec<_>>().join(", ");
    let shares: Vec<String> = s
        .shrinkage
        .iter()
        .map(|&x| crate::units::format_share(x))
        .collect();
    let mut distinct = shares.clone();
    distinct.dedup();
    let shrinkage = if distinct.len() == 1 {
        distinct[0].clone()
    } else {
        shares.join(", ")
    };
    if s.present.len() == 1 {
        return format!(
            "{} servers taking calls ({} scheduled less {shrinkage} shrinkage)",
            s.present[0], s.scheduled[0]
        );
    }
    let mut words = format!(
        "servers per {} taking calls {} (the last holds)",
        format_duration(s.interval_s),
        list(&s.present)
    );
    if s.shrinkage.iter().any(|&x| x > 0.0) {
        words.push_str(&format!(
            ", scheduled {} less {shrinkage} shrinkage",
            list(&s.scheduled)
        ));
    }
    words
}

/// The stages of stream `s`'s call flow, one line each, and the mean total
/// holding.
fn describe_stages(out: &mut String, model: &Model, s: &crate::scenario::Stream) {
    out.push_str(&format!(
        "    call flow of {} stages, mean total holding {} when nobody waits\n",
        s.stages.len(),
        format_duration(s.flow_holding_mean())
    ));
    for (k, st) in s.stages.iter().enumerate() {
        let route: Vec<&str> = (st.route.iter())
            .map(|&g| model.groups[g as usize].name.as_str())
            .collect();
        let mut line = format!("    {}. {}: {}", k + 1, st.name, route.join(" -> "));
        match &st.holding {
            Some(h) => line.push_str(&format!(", holding {}", h.describe())),
            None => line.push_str(", no time of its own"),
        }
        if st.hold == crate::scenario::Hold::ToEnd {
            line.push_str(", held to the end of the call");
        }
        if let Some(p) = &st.patience {
            line.push_str(&format!(", patience {}", p.describe()));
        }
        if st.finish > 0.0 {
            line.push_str(&format!(", {} end here", format_share(st.finish)));
        }
        out.push_str(&line);
        out.push('\n');
    }
}
