//! The textbook view of a model (the formula column): which closed form
//! applies to which figure of this design, and its value, wherever a
//! formula's assumptions hold, so the engineer sees how far the simulated
//! design moves from the textbook. Model analysis between `formulas` and its
//! users (`report`, `experiment::size`); calls `formulas`, changes nothing,
//! and imports nothing from `report`.
//!
//! Which formula applies where:
//! - Erlang B: a loss group offered Poisson traffic directly (first choice of
//!   every stream that uses it), one server per call, no reservation. Erlang B
//!   is insensitive to the holding-time law (Sevastyanov), so any law
//!   qualifies; the overflow mean A*B is insensitive too, Riordan's
//!   peakedness holds for exponential holding only.
//! - Erlang B with redials, fixed point (approx.): the same group when some
//!   of its streams redial and every stream ends on it. `B = E_N(offered
//!   attempts)`, solved with each stream's own redial chances (the last
//!   repeating, as simulated) and attempt limit; gives time congestion,
//!   first-attempt and attempt blocking (both `B`), attempts per call, loss,
//!   carried traffic and the overflow mean (`B` x attempt traffic); no
//!   peakedness. Close for redials long after the blocking, understates
//!   attempt blocking and loss for quick ones (tests/formulas_redial_fixed_point.rs).
//!   Where a redialing group also passes calls on, only "Erlang B, no
//!   redials" is shown (time congestion; first attempts and loss of the
//!   streams ending there), named for what it ignores.
//! - Overflow parcels as interrupted Poisson processes (Kuczura 1973,
//!   approx.): loss of a stream routed over a first group that meets the
//!   Erlang B conditions and then a final group that is offered only such
//!   overflow and direct Poisson traffic; exponential holding. Each
//!   parcel's overflow is replaced by the IPP with its first three moments
//!   and the final group solved as a chain over the parcels' phases, so a
//!   peaky parcel loses more than a smooth one; the direct stream's loss is
//!   the final group's time congestion (shown for the group too). Within
//!   4% of the exact network chain on the reference cases
//!   (`tests/formulas_overflow.rs`; the peakedness split B_i = B Z_i / Z of
//!   the equivalent random method understated peaky parcels by 20-40%).
//!   Up to [`overflow::MAX_PARCEL_PHASES`] phase combinations; beyond, no
//!   value.
//! - Kaufman-Roberts: a loss group whose direct Poisson streams take different
//!   numbers of servers per call.
//! - Erlang C: an unlimited queue on a single group, Poisson arrivals,
//!   exponential holding with one mean, no patience limit.
//! - Erlang A: the same with exponential patience of one mean.
//! - M/G/N, the Erlang C conditions except that the holding law is not
//!   exponential (one mean and one cv for every stream, no patience):
//!   Pollaczek-Khinchine for one agent (exact: mean wait and P(wait) = load),
//!   Cosmetatos for constant holding on several agents and Allen-Cunneen
//!   otherwise (both approx., named so), for `wait_mean` and
//!   `wait_probability` (Erlang C's, kept by both approximations). Loss 0
//!   and carried traffic = offered are exact for any law and labelled
//!   "unlimited queue, no loss". No service level: no two-moment form of the
//!   wait distribution is shown.
//! - M/M/N/K and M/M/N/K+M (exact): a limited queue on a single group, the
//!   Erlang C or Erlang A conditions otherwise (Poisson, exponential holding
//!   of one mean, no patience or exponential patience of one mean): blocking
//!   (waiting room full) as first-attempt blocking, loss (blocked and
//!   abandoned), P(wait), answered mean wait, abandonment, service level,
//!   carried traffic and the time every agent is busy.
//! - Peak profiles on a loss group (direct Poisson streams ending there):
//!   Erlang B of the average load (whole period), and per interval Erlang B
//!   of the interval's own load (stationary). The per-interval stream loss
//!   gets the modified offered load instead (Jagerman 1975, Massey and
//!   Whitt 1994; approx.; the M_t/G/inf mean for any holding law), and the
//!   stationary value moves to the group's per-interval time congestion.
//! - Engset: one finite-source stream alone on a loss group (insensitive to
//!   the holding and idle laws).
//!
//! - Forecast uncertainty (a stream's rate times a random factor per day):
//!   the simulated figures are averages over the factor's law, and a book
//!   value at the forecast's mean load is not one of them, so every entry
//!   of a group that an uncertain stream reaches (directly or through
//!   overflow), and of every stream through such a group, is dropped. In
//!   its place, on a group that meets the Erlang B conditions with one
//!   random factor among its streams (one uncertain stream, or several
//!   sharing a factor), "Erlang B over the forecast's spread (integrated)":
//!   loss and first-attempt blocking E\[F B(N, A(F))\] / E\[F\] for an
//!   uncertain stream (E\[B\] for a known one), time congestion E\[B\],
//!   carried traffic, occupancy and overflow mean likewise, A(F) the
//!   group's load on a day of factor F, the expectation by quadrature over
//!   the factor's law ([`factor_expectation`]). No peakedness (the pooled
//!   variance holds the day-to-day spread).
//!
//! - Queue classes (`priority`, `prefer`): the group's figures keep the
//!   one-class values (with equal holding laws the number of calls in the
//!   group does not depend on the order of answering); under the Erlang C
//!   conditions a stream's mean wait is Cobham's per-class formula for
//!   non-pre-emptive priority ([`COBHAM`]) and its P(wait) Erlang C's; no
//!   service level per class, and no per-class value under any other
//!   queue formula.
//! - Pre-emptive priority (`preemption`): every entry of the group, of the
//!   groups its users' routes reach and of the streams through them is
//!   dropped; in their place the highest class (the smallest `priority`
//!   among the group's streams), which never sees the classes below it, is
//!   the queue of its own load ([`PREEMPTIVE_ALONE`]): Erlang C on an
//!   unlimited queue under the Erlang C conditions (of its own streams:
//!   the classes below may hold for any law), Erlang B on a loss
//!   group with `lose` (any holding law). With `resume`, the Erlang C
//!   conditions and every stream alone on the group's route, the number in
//!   the group is that of M/M/N first come first served: the group keeps
//!   Erlang C's carried traffic and occupancy, every lower class's P(wait) is
//!   Erlang C of the total, and with two classes the lower one's
//!   interruptions per answered call are (λ_1 / λ_2) (C(N, A) - C(N, a_1))
//!   by PASTA ([`PREEMPTIVE_RESUME`]).
//! - Calls seen by several groups (`seen_by`): every entry of the groups
//!   such calls reach and of the streams through them is dropped; where a
//!   set of groups pools completely (each waiting call seen at once by
//!   all of them, the Erlang C conditions otherwise), Erlang C of the
//!   pooled groups ([`POOLED_ERLANG_C`]).
//! - Call flows with stages: a flow's groups carry calls that hold several
//!   servers in turn, which no formula above describes, so every entry of
//!   a group a flow uses, and of every stream through such a group, is
//!   dropped. In its place, on a trunk group that is the flows' only place
//!   of loss (every user a Poisson flow that seizes it alone at its first
//!   stage and holds it to the end; each later group serving only those
//!   flows with at least as many servers, so that nobody waits or is
//!   blocked downstream), "Erlang B of the total holding (insensitivity)":
//!   the trunk group is an M/G/N/N system whose holding is the sum of the
//!   stages (the mean weighted by the share that reaches each stage), and
//!   Erlang B is exact whatever the stage laws: time congestion, carried
//!   traffic and occupancy of the trunks; first-attempt blocking, loss,
//!   carried traffic and P(wait) = 0 of the streams; the first stage's
//!   blocking.
//!
//! Every formula here reads a group's servers as constant: none is shown
//! for a group whose schedule changes its servers over the run, nor for the
//! streams routed through one. Shrinkage alone (a constant schedule) keeps
//! them, on the servers taking calls.

use crate::formulas::{
    engset, erlang_a, erlang_b, erlang_c, finite_queue, multirate, overflow, queue_general,
    redial_fixed_point,
};
use crate::scenario::{Arrivals, Model, Preemption, Queue, Stream};
use crate::stats::{Figure, FigureId, Scope, group_figures, stage_figures, stream_figures};
use std::collections::HashMap;

/// A closed-form value and the method that gave it.
#[derive(Debug, Clone, PartialEq)]
pub struct Formula {
    /// Method, e.g. "Erlang B".
    pub name: &'static str,
    /// Its value, in the figure's unit.
    pub value: f64,
}

/// Column builder: keeps only figures the layout reports.
struct Column<'m> {
    model: &'m Model,
    map: HashMap<FigureId, Formula>,
}

impl Column<'_> {
    /// Record `method`'s `value` for `figure` in `scope` (finite values only).
    fn set(&mut self, scope: Scope, figure: Figure, method: &'static str, value: f64) {
        if value.is_finite() {
            let formula = Formula {
                name: method,
                value,
            };
            self.map.insert(FigureId { scope, figure }, formula);
        }
    }
    fn stream(&mut self, s: usize, figure: Figure, method: &'static str, value: f64) {
        if stream_figures(self.model, s).contains(&figure) {
            self.set(Scope::Stream(s), figure, method, value);
        }
    }
    fn stream_interval(
        &mut self,
        b: usize,
        s: usize,
        figure: Figure,
        method: &'static str,
        value: f64,
    ) {
        self.set(Scope::StreamInterval(b, s), figure, method, value);
    }
    fn group_interval(
        &mut self,
        b: usize,
        g: usize,
        figure: Figure,
        method: &'static str,
        value: f64,
    ) {
        self.set(Scope::GroupInterval(b, g), figure, method, value);
    }
    fn group(&mut self, g: usize, figure: Figure, method: &'static str, value: f64) {
        if group_figures(self.model, g).contains(&figure) {
            self.set(Scope::Group(g), figure, method, value);
        }
    }
}

fn poisson_rate(s: &Stream) -> Option<f64> {
    match s.arrivals {
        Arrivals::Poisson { rate } => Some(rate),
        _ => None,
    }
}

/// Whether stream `st`'s patience is exponential (or absent) and the same
/// as every stream's before it (`seen`, which it then holds): the queue
/// formulas take one exponential patience or none.
fn same_exponential_patience(seen: &mut Option<Option<f64>>, st: &Stream) -> bool {
    let p = match &st.patience {
        None => None,
        Some(l) if l.is_exponential() => Some(l.mean()),
        Some(_) => return false,
    };
    if seen.is_some_and(|x| x != p) {
        return false;
    }
    *seen = Some(p);
    true
}

/// Streams whose route includes group `g`, with the position of `g`.
fn users(model: &Model, g: usize) -> Vec<(usize, usize)> {
    model
        .streams
        .iter()
        .enumerate()
        .filter_map(|(s, st)| {
            st.route
                .iter()
                .position(|&x| x as usize == g)
                .map(|p| (s, p))
        })
        .collect()
}

/// Offered Poisson traffic of group `g` if it is a loss group offered only
/// direct (first-choice) Poisson traffic, one server per call, no
/// reservation. The flag says whether every holding law is exponential.
fn direct_poisson_load(model: &Model, g: usize, allow_units: bool) -> Option<(f64, bool)> {
    let grp = &model.groups[g];
    if grp.queue != Queue::None || grp.reserve > 0 {
        return None;
    }
    let mut traffic = 0.0;
    let mut exponential = true;
    let u = users(model, g);
    if u.is_empty() {
        return None;
    }
    for (s, pos) in u {
        let st = &model.streams[s];
        if pos != 0 || (!allow_units && st.units != 1) {
            return None;
        }
        traffic += poisson_rate(st)? * st.holding.mean();
        exponential &= st.holding.is_exponential();
    }
    Some((traffic, exponential))
}

/// Closed-form values for the figures of `model` where one applies.
pub fn formula_column(model: &Model) -> HashMap<FigureId, Formula> {
    let mut col = Column {
        model,
        map: HashMap::new(),
    };
    for g in 0..model.groups.len() {
        erlang_b_group(&mut col, g);
        multirate_group(&mut col, g);
        queue_group(&mut col, g);
        engset_group(&mut col, g);
    }
    equivalent_random(&mut col);
    for g in 0..model.groups.len() {
        profile_group(&mut col, g);
    }
    for g in 0..model.groups.len() {
        if model.groups[g].preemption.is_some() {
            preemptive_group(&mut col, g);
        } else if model.has_classes(g) {
            priority_group(&mut col, g);
        }
    }
    // The formulas above read a group's servers as constant: none is shown
    // for a group whose servers change over the run, nor for a stream that
    // passes through one.
    let changing = |g: usize| model.groups[g].servers_change();
    let through_changing = |s: usize| model.streams[s].route.iter().any(|&g| changing(g as usize));
    col.map.retain(|id, _| match id.scope {
        Scope::Group(g) | Scope::GroupInterval(_, g) => !changing(g),
        Scope::Stream(s) | Scope::StreamInterval(_, s) | Scope::Stage(s, _) => !through_changing(s),
    });
    // Per interval, such groups still have the stationary formula of each
    // interval's load on that interval's servers.
    for g in 0..model.groups.len() {
        interval_stationary_group(&mut col, g);
    }
    if model.has_seen_by() {
        seen_by(&mut col);
    }
    if model.has_forecast_spread() {
        forecast_spread(&mut col);
    }
    if model.streams.iter().any(Stream::has_stages) {
        call_flows(&mut col);
    }
    col.map
}

/// Label of the trunk group's Erlang B of the flow's total holding.
pub const FLOW_ERLANG_B: &str = "Erlang B of the total holding (insensitivity)";

/// The column of a model with call flows (see the module's "Call flows"):
/// drop every entry of a group a flow uses, and of every stream through
/// such a group, then put Erlang B of the total holding on each trunk
/// group that is the flows' only place of loss.
fn call_flows(col: &mut Column) {
    let model = col.model;
    let mut flow_group = vec![false; model.groups.len()];
    for st in model.streams.iter().filter(|s| s.has_stages()) {
        for &g in &st.route {
            flow_group[g as usize] = true;
        }
    }
    let touched: Vec<bool> = (model.streams.iter())
        .map(|st| st.route.iter().any(|&g| flow_group[g as usize]))
        .collect();
    col.map.retain(|id, _| match id.scope {
        Scope::Group(g) | Scope::GroupInterval(_, g) => !flow_group[g],
        Scope::Stream(s) | Scope::StreamInterval(_, s) | Scope::Stage(s, _) => !touched[s],
    });
    for g in 0..model.groups.len() {
        flow_trunk_group(col, g);
    }
}

/// Group `g` as the trunks of call flows, held to the end and the only
/// place of loss: every stream that uses it is a flow with Poisson arrivals
/// (a known rate, no redials) whose first stage seizes `g` alone and holds
/// it to the end; `g` is a loss group with constant servers and no
/// reservation; and every group of those flows' later stages serves only
/// them, with no reservation and at least as many servers (constant) as
/// `g`, so that nobody waits or is blocked after seizing a trunk (the
/// trunks bound the calls in progress). Then each call holds a trunk for
/// its total holding, the sum of its stages' times, and the trunk group is
/// an M/G/N/N loss system: Erlang B of the offered load (rate times the
/// mean total holding, [`Stream::flow_holding_mean`]) is exact whatever the
/// stage laws (insensitivity: Sevastyanov 1957).
fn flow_trunk_group(col: &mut Column, g: usize) {
    let model = col.model;
    let grp = &model.groups[g];
    if grp.queue != Queue::None || grp.reserve > 0 || grp.schedule.is_some() {
        return;
    }
    let n = grp.servers;
    let trunk_users = users(model, g);
    if trunk_users.is_empty() {
        return;
    }
    let mut load = 0.0;
    let mut later = Vec::new();
    for &(s, _) in &trunk_users {
        let st = &model.streams[s];
        let Some(first) = st.stages.first() else {
            return;
        };
        if first.route != [g as u32] || first.hold != crate::scenario::Hold::ToEnd {
            return;
        }
        if st.retry.is_some() || st.forecast.is_some() {
            return;
        }
        let Some(rate) = poisson_rate(st) else { return };
        load += rate * st.flow_holding_mean();
        later.extend(st.stages[1..].iter().flat_map(|k| k.route.iter().copied()));
    }
    for &h in &later {
        let other = &model.groups[h as usize];
        let only_these = users(model, h as usize)
            .iter()
            .all(|&(s, _)| trunk_users.iter().any(|&(u, _)| u == s));
        if !only_these || other.reserve > 0 || other.schedule.is_some() || other.servers < n {
            return;
        }
    }
    let Ok(b) = erlang_b::blocking(n, load) else {
        return;
    };
    col.group(g, Figure::TimeCongestion, FLOW_ERLANG_B, b);
    col.group(g, Figure::CarriedTraffic, FLOW_ERLANG_B, load * (1.0 - b));
    col.group(
        g,
        Figure::Occupancy,
        FLOW_ERLANG_B,
        load * (1.0 - b) / f64::from(n),
    );
    for &(s, _) in &trunk_users {
        let st = &model.streams[s];
        let a = poisson_rate(st).unwrap_or(f64::NAN) * st.flow_holding_mean();
        col.stream(s, Figure::FirstAttemptBlocking, FLOW_ERLANG_B, b);
        col.stream(s, Figure::Loss, FLOW_ERLANG_B, b);
        col.stream(s, Figure::CarriedTraffic, FLOW_ERLANG_B, a * (1.0 - b));
        col.stream(s, Figure::WaitProbability, FLOW_ERLANG_B, 0.0);
        if stage_figures(model, s, 0).contains(&Figure::StageBlocked) {
            col.set(Scope::Stage(s, 0), Figure::StageBlocked, FLOW_ERLANG_B, b);
        }
    }
}

/// Labels of the stationary per-interval formulas on the interval's own
/// servers.
const INTERVAL_B: &str = "Erlang B, interval load and servers (approx.)";
const INTERVAL_C: &str = "Erlang C, interval load and servers (approx.)";
const INTERVAL_A: &str = "Erlang A, interval load and servers (approx.)";

/// A group whose servers change over the run, or a queue whose load follows
/// a peak profile: per reporting interval, the stationary formula of the
/// interval's forecast load on the servers present in it (Erlang B for a
/// loss group, Erlang C for an unlimited queue, Erlang A with exponential
/// patience), the stationary independent period-by-period approximation
/// (Green, Kolesar and Soares 2001): it ignores what one interval leaves to
/// the next, so it is marked approx. Only where the servers are the same
/// through the interval, every stream offers Poisson (or peak-profile)
/// calls directly, with no redials, one server per call, one holding mean,
/// exponential holding for a queue and one exponential patience or none. A
/// loss group with constant servers has its own per-interval references
/// (`profile_group`).
fn interval_stationary_group(col: &mut Column, g: usize) {
    let model = col.model;
    let grp = &model.groups[g];
    let users = users(model, g);
    let profiled =
        (users.iter()).any(|&(s, _)| matches!(model.streams[s].arrivals, Arrivals::Profile { .. }));
    let wanted = grp.servers_change() || (profiled && grp.queue != Queue::None);
    if !wanted
        || model.has_classes(g)
        || model.plan.interval_s.is_none()
        || users.is_empty()
        || grp.reserve > 0
        || grp.overflow_after_s.is_some()
        || matches!(grp.queue, Queue::Limited(_))
    {
        return;
    }
    let mut holding = None::<f64>;
    let mut patience = None::<Option<f64>>;
    for &(s, pos) in &users {
        let st = &model.streams[s];
        let direct = matches!(
            st.arrivals,
            Arrivals::Poisson { .. } | Arrivals::Profile { .. }
        );
        if pos != 0 || st.route.len() != 1 || st.units != 1 || st.retry.is_some() || !direct {
            return;
        }
        let h = st.holding.mean();
        if holding.is_some_and(|x| (x - h).abs() > 1e-12 * h) {
            return;
        }
        holding = Some(h);
        if !same_exponential_patience(&mut patience, st) {
            return;
        }
    }
    let (Some(h), Some(patience)) = (holding, patience) else {
        return;
    };
    let queue = grp.queue == Queue::Unlimited;
    let exponential = (users.iter()).all(|&(s, _)| model.streams[s].holding.is_exponential());
    if queue && !exponential {
        return;
    }
    for b in 0..model.plan.interval_count() {
        let t0 = crate::stats::interval_start(model, b);
        let t1 = t0 + crate::stats::interval_length(model, b);
        let n = match &grp.schedule {
            None => grp.servers,
            Some(sch) => {
                let (first, last) = (sch.entry_at(t0), sch.entry_at(t1 - 1e-6 * (t1 - t0)));
                let n = sch.present[first];
                if sch.present[first..=last].iter().any(|&m| m != n) {
                    continue;
                }
                n
            }
        };
        if n == 0 {
            continue;
        }
        let load = window_load(users.iter().map(|&(s, _)| &model.streams[s]), t0, t1);
        let figures = |s: usize| crate::stats::stream_interval_figures(model, s);
        if !queue {
            let Ok(blocking) = erlang_b::blocking(n, load) else {
                continue;
            };
            for &(s, _) in &users {
                col.stream_interval(b, s, Figure::Loss, INTERVAL_B, blocking);
            }
            col.group_interval(b, g, Figure::TimeCongestion, INTERVAL_B, blocking);
            continue;
        }
        match patience {
            None => {
                let (Ok(c), Ok(w)) = (
                    erlang_c::wait_probability(n, load),
                    erlang_c::mean_wait(n, load, h),
                ) else {
                    continue;
                };
                for &(s, _) in &users {
                    let mut set = |f: Figure, v: f64| {
                        if figures(s).contains(&f) {
                            col.stream_interval(b, s, f, INTERVAL_C, v);
                        }
                    };
                    set(Figure::WaitProbability, c);
                    set(Figure::WaitMean, w);
                    if let Some(aw) = model.streams[s].answer_within_s
                        && let Ok(sl) = erlang_c::service_level(n, load, h, aw)
                    {
                        set(Figure::ServiceLevel, sl);
                    }
                }
            }
            Some(theta) => {
                let Ok(ea) = erlang_a::solve(n, load, h, theta) else {
                    continue;
                };
                for &(s, _) in &users {
                    let mut set = |f: Figure, v: f64| {
                        if figures(s).contains(&f) {
                            col.stream_interval(b, s, f, INTERVAL_A, v);
                        }
                    };
                    set(Figure::WaitProbability, ea.wait_probability);
                    set(Figure::Abandonment, ea.abandonment);
                    set(Figure::Loss, ea.abandonment);
                    set(Figure::WaitMean, ea.mean_wait_answered_s);
                    if let Some(aw) = model.streams[s].answer_within_s {
                        set(Figure::ServiceLevel, ea.service_level(aw));
                    }
                }
            }
        }
    }
}

/// Label of the per-class mean wait of non-pre-emptive priority.
pub const COBHAM: &str = "Cobham, non-pre-emptive priority";

/// A group whose queue holds several classes (`priority`, `prefer`). Its
/// group figures (carried traffic, occupancy, time congestion) keep the
/// values of one class: with equal holding laws the number of calls in
/// the group does not depend on the order waiting calls are answered in.
/// A stream's figures do: under the Erlang C conditions its mean wait is
/// Cobham's per-class formula and its P(wait) stays Erlang C's (an arrival
/// waits when every agent is busy, whatever its class); no closed form
/// gives a class's service level. Under any other queue formula (Erlang A,
/// the finite queue, M/G/N) no per-class form is shown.
fn priority_group(col: &mut Column, g: usize) {
    let model = col.model;
    let grp = &model.groups[g];
    let users = users(model, g);
    let erlang_c = (users.iter()).all(|&(s, _)| {
        let id = FigureId {
            scope: Scope::Stream(s),
            figure: Figure::WaitMean,
        };
        col.map.get(&id).is_some_and(|f| f.name == "Erlang C")
    });
    let streams: Vec<usize> = (0..model.streams.len())
        .filter(|&s| model.streams[s].reach().any(|x| x as usize == g))
        .collect();
    col.map.retain(|id, _| match id.scope {
        Scope::Stream(s) | Scope::StreamInterval(_, s) | Scope::Stage(s, _) => {
            !streams.contains(&s)
        }
        Scope::Group(_) | Scope::GroupInterval(_, _) => true,
    });
    if !erlang_c || users.is_empty() || users.len() != streams.len() {
        return;
    }
    // The Erlang C conditions held (queue_group): Poisson streams, one
    // exponential holding mean, no patience, unlimited queue.
    let classes = grp.class_of.iter().max().map_or(0, |&c| c as usize) + 1;
    let mut traffic = vec![0.0; classes];
    for &(s, _) in &users {
        let st = &model.streams[s];
        let Some(rate) = poisson_rate(st) else { return };
        traffic[grp.class_of[s] as usize] += rate * st.holding.mean();
    }
    let h = model.streams[users[0].0].holding.mean();
    let total: f64 = traffic.iter().sum();
    let (Ok(waits), Ok(c)) = (
        crate::formulas::priority::class_mean_waits(grp.servers, &traffic, h),
        erlang_c::wait_probability(grp.servers, total),
    ) else {
        return;
    };
    for &(s, _) in &users {
        col.stream(s, Figure::WaitMean, COBHAM, waits[grp.class_of[s] as usize]);
        col.stream(s, Figure::WaitProbability, "Erlang C", c);
        col.stream(s, Figure::Loss, "Erlang C", 0.0);
    }
}

/// Stream `s`'s figures of an M/M/N queue (`method`): (servers, traffic,
/// mean holding), and its (P(wait), mean wait) already solved: those two,
/// no loss, and the service level where the stream has a target. The one
/// home of the Erlang C stream entries (a queue, a pool, a class alone).
fn erlang_c_stream(
    col: &mut Column,
    s: usize,
    method: &'static str,
    (n, traffic, h): (u32, f64, f64),
    (c, w): (f64, f64),
) {
    col.stream(s, Figure::WaitProbability, method, c);
    col.stream(s, Figure::WaitMean, method, w);
    col.stream(s, Figure::Loss, method, 0.0);
    if let Some(aw) = col.model.streams[s].answer_within_s
        && let Ok(sl) = erlang_c::service_level(n, traffic, h, aw)
    {
        col.stream(s, Figure::ServiceLevel, method, sl);
    }
}

/// Label of the highest class of a group with pre-emption: the queue of
/// its own load alone.
pub const PREEMPTIVE_ALONE: &str = "Erlang C, class alone (pre-emptive)";
/// The same on a loss group with pre-emptive loss.
pub const PREEMPTIVE_ALONE_LOSS: &str = "Erlang B, class alone (pre-emptive)";
/// Label of the figures of pre-emptive resume that follow from the M/M/N
/// number in system.
pub const PREEMPTIVE_RESUME: &str = "Erlang C, total (pre-emptive resume)";

/// A group with `preemption` (see the module's list): drop what the
/// one-class formulas said of it, its users' other groups and every
/// stream through them, then give the highest class the queue of its own
/// load and, with resumption, what the M/M/N number in system implies.
fn preemptive_group(col: &mut Column, g: usize) {
    let model = col.model;
    let grp = &model.groups[g];
    let users = users(model, g);
    let mut groups = vec![false; model.groups.len()];
    groups[g] = true;
    for &(s, _) in &users {
        for &x in &model.streams[s].route {
            groups[x as usize] = true;
        }
    }
    let streams: Vec<bool> = (model.streams.iter())
        .map(|st| st.reach().any(|x| groups[x as usize]))
        .collect();
    col.map.retain(|id, _| match id.scope {
        Scope::Stream(s) | Scope::StreamInterval(_, s) | Scope::Stage(s, _) => !streams[s],
        Scope::Group(x) | Scope::GroupInterval(_, x) => !groups[x],
    });
    if users.is_empty() || grp.reserve > 0 || grp.overflow_after_s.is_some() {
        return;
    }
    // Every user Poisson, alone on the group (its whole route), one server
    // a call, no redials, no patience; nobody else reaches the group.
    let reaching = streams.iter().filter(|&&x| x).count();
    let mut rates = Vec::with_capacity(users.len());
    for &(s, _) in &users {
        let st = &model.streams[s];
        let Some(rate) = poisson_rate(st) else { return };
        if st.route.len() != 1 || st.units != 1 || st.retry.is_some() || st.patience.is_some() {
            return;
        }
        rates.push(rate);
    }
    if reaching != users.len() {
        return;
    }
    let rank = |s: usize| model.streams[s].priority.unwrap_or(u32::MAX);
    let top = (users.iter())
        .map(|&(s, _)| rank(s))
        .min()
        .unwrap_or(u32::MAX);
    let load = |pick: &dyn Fn(usize) -> bool| -> f64 {
        (users.iter().zip(&rates))
            .filter(|((s, _), _)| pick(*s))
            .map(|((s, _), r)| r * model.streams[*s].holding.mean())
            .sum()
    };
    let a_top = load(&|s| rank(s) == top);
    let n = grp.servers;
    match grp.queue {
        Queue::None => {
            if grp.preemption != Some(Preemption::Lose) {
                return; // interrupted calls wait: not a loss system
            }
            let Ok(b) = erlang_b::blocking(n, a_top) else {
                return;
            };
            for &(s, _) in users.iter().filter(|&&(s, _)| rank(s) == top) {
                col.stream(s, Figure::Loss, PREEMPTIVE_ALONE_LOSS, b);
                col.stream(s, Figure::FirstAttemptBlocking, PREEMPTIVE_ALONE_LOSS, b);
            }
        }
        Queue::Limited(_) => {} // the waiting places are shared with the classes below
        Queue::Unlimited => {
            // The highest class alone needs one exponential holding mean
            // among its own streams; the rest, below, among all.
            let first_top = (users.iter()).find(|&&(s, _)| rank(s) == top);
            let Some(&(s0, _)) = first_top else { return };
            let h = model.streams[s0].holding.mean();
            let one_mean = |s: usize| {
                let law = &model.streams[s].holding;
                law.is_exponential() && (law.mean() - h).abs() <= 1e-12 * h
            };
            if !(users.iter()).all(|&(s, _)| rank(s) != top || one_mean(s)) {
                return;
            }
            let (Ok(c), Ok(w)) = (
                erlang_c::wait_probability(n, a_top),
                erlang_c::mean_wait(n, a_top, h),
            ) else {
                return;
            };
            for &(s, _) in users.iter().filter(|&&(s, _)| rank(s) == top) {
                erlang_c_stream(col, s, PREEMPTIVE_ALONE, (n, a_top, h), (c, w));
            }
            if grp.preemption != Some(Preemption::Resume)
                || !users.iter().all(|&(s, _)| one_mean(s))
            {
                return;
            }
            let total = load(&|_| true);
            let Ok(c_total) = erlang_c::wait_probability(n, total) else {
                return;
            };
            col.group(g, Figure::CarriedTraffic, PREEMPTIVE_RESUME, total);
            col.group(
                g,
                Figure::Occupancy,
                PREEMPTIVE_RESUME,
                total / f64::from(n),
            );
            let lower = |s: usize| rank(s) != top;
            let ranks: std::collections::BTreeSet<u32> =
                users.iter().map(|&(s, _)| rank(s)).collect();
            let (rate_top, rate_low): (f64, f64) =
                (users.iter().zip(&rates)).fold((0.0, 0.0), |(t, l), ((s, _), r)| {
                    if lower(*s) { (t, l + r) } else { (t + r, l) }
                });
            for &(s, _) in users.iter().filter(|&&(s, _)| lower(s)) {
                col.stream(s, Figure::WaitProbability, PREEMPTIVE_RESUME, c_total);
                col.stream(s, Figure::Loss, PREEMPTIVE_RESUME, 0.0);
                if ranks.len() == 2 && rate_low > 0.0 {
                    let i = rate_top / rate_low * (c_total - c);
                    col.stream(s, Figure::Interruptions, PREEMPTIVE_RESUME, i);
                }
            }
        }
    }
}

/// Label of Erlang C on a pool of groups that see every waiting call.
pub const POOLED_ERLANG_C: &str = "Erlang C of the pooled groups";

/// Streams whose waiting calls are seen by other groups (`seen_by`): no
/// formula above covers them or the groups they reach, so every entry of a
/// group that sees such a call or where one waits (a route's groups from
/// the first with waiting places on), and of every stream that reaches
/// one, is dropped. In its place, where a set of groups pools completely
/// (every stream that reaches one of them waits in one of them and is
/// seen at once, with no delay, by all the others; one class in each
/// queue), the pool is one M/M/N group of their servers together, first
/// come first served: Erlang C of the pooled groups for the streams' P(wait),
/// mean wait, loss and service level, under the Erlang C conditions
/// (Poisson, one exponential holding mean, no patience, no redials, one
/// server a call, unlimited queues, no reservation, no `overflow_after`,
/// constant servers, no forecast spread).
fn seen_by(col: &mut Column) {
    let model = col.model;
    let mut touched = vec![false; model.groups.len()];
    for st in model.streams.iter().filter(|s| !s.seen_by.is_empty()) {
        st.seen_by
            .iter()
            .for_each(|x| touched[x.group as usize] = true);
        let first_queue = (st.route.iter())
            .position(|&g| model.groups[g as usize].queue != Queue::None)
            .unwrap_or(st.route.len());
        st.route[first_queue..]
            .iter()
            .for_each(|&g| touched[g as usize] = true);
    }
    let reaches_touched: Vec<bool> = (model.streams.iter())
        .map(|s| s.reach().any(|g| touched[g as usize]))
        .collect();
    col.map.retain(|id, _| match id.scope {
        Scope::Group(g) | Scope::GroupInterval(_, g) => !touched[g],
        Scope::Stream(s) | Scope::StreamInterval(_, s) | Scope::Stage(s, _) => !reaches_touched[s],
    });
    // Pools: the groups a stream reaches, joined through shared streams.
    let mut pool_of: Vec<usize> = (0..model.groups.len()).collect();
    fn root(p: &mut [usize], mut g: usize) -> usize {
        while p[g] != g {
            p[g] = p[p[g]];
            g = p[g];
        }
        g
    }
    for st in &model.streams {
        let mut reach = st.reach();
        if let Some(first) = reach.next() {
            for g in reach {
                let (a, b) = (
                    root(&mut pool_of, first as usize),
                    root(&mut pool_of, g as usize),
                );
                pool_of[a] = b;
            }
        }
    }
    for (g, &t) in touched.iter().enumerate() {
        if !t || root(&mut pool_of, g) != g {
            continue;
        }
        let pool: Vec<usize> = (0..model.groups.len())
            .filter(|&x| root(&mut pool_of, x) == g)
            .collect();
        pooled_erlang_c(col, &pool);
    }
}

/// [`seen_by`]'s pooled Erlang C for one pool of groups, where it applies.
fn pooled_erlang_c(col: &mut Column, pool: &[usize]) {
    let model = col.model;
    for &g in pool {
        let grp = &model.groups[g];
        if grp.queue != Queue::Unlimited
            || grp.reserve > 0
            || grp.overflow_after_s.is_some()
            || grp.servers_change()
            || model.has_classes(g)
        {
            return;
        }
    }
    let streams: Vec<usize> = (0..model.streams.len())
        .filter(|&s| {
            model.streams[s]
                .reach()
                .any(|g| pool.contains(&(g as usize)))
        })
        .collect();
    let mut traffic = 0.0;
    let mut holding = None::<f64>;
    for &s in &streams {
        let st = &model.streams[s];
        let sees_all = (pool.iter()).all(|&g| {
            st.route == [g as u32]
                || st
                    .seen_by
                    .iter()
                    .any(|x| x.group as usize == g && x.after_s == 0.0)
        });
        let Some(rate) = poisson_rate(st) else { return };
        let h = st.holding.mean();
        if st.route.len() != 1
            || !sees_all
            || st.units != 1
            || st.retry.is_some()
            || st.patience.is_some()
            || st.forecast.is_some()
            || !st.holding.is_exponential()
            || holding.is_some_and(|x| (x - h).abs() > 1e-12 * h)
        {
            return;
        }
        holding = Some(h);
        traffic += rate * h;
    }
    let Some(h) = holding else { return };
    let n: u32 = pool.iter().map(|&g| model.groups[g].servers).sum();
    let (Ok(c), Ok(w)) = (
        erlang_c::wait_probability(n, traffic),
        erlang_c::mean_wait(n, traffic, h),
    ) else {
        return;
    };
    for &s in &streams {
        erlang_c_stream(col, s, POOLED_ERLANG_C, (n, traffic, h), (c, w));
    }
}

/// Label of the Erlang B value averaged over a forecast's spread.
pub const FORECAST_ERLANG_B: &str = "Erlang B over the forecast's spread (integrated)";

/// Largest group the integrated Erlang B is computed for (each quadrature
/// node costs one Erlang B recursion of N steps).
const FORECAST_MAX_SERVERS: u32 = 100_000;

/// Groups reached by a stream with forecast uncertainty, directly or
/// through the overflow of another stream that such a group passes on, and
/// the streams through them (see the module's "Forecast uncertainty").
pub fn forecast_reach(model: &Model) -> (Vec<bool>, Vec<bool>) {
    let mut streams: Vec<bool> = model.streams.iter().map(|s| s.forecast.is_some()).collect();
    let mut groups = vec![false; model.groups.len()];
    loop {
        let mut changed = false;
        for (si, st) in model.streams.iter().enumerate() {
            let touches = st.route.iter().any(|&g| groups[g as usize]);
            if touches && !streams[si] {
                streams[si] = true;
                changed = true;
            }
            if streams[si] {
                for &g in &st.route {
                    changed |= !groups[g as usize];
                    groups[g as usize] = true;
                }
            }
        }
        if !changed {
            return (groups, streams);
        }
    }
}

/// The column of a model with forecast uncertainty: drop every entry the
/// spread reaches, then put the integrated Erlang B where it applies.
fn forecast_spread(col: &mut Column) {
    let model = col.model;
    let (groups, streams) = forecast_reach(model);
    col.map.retain(|id, _| match id.scope {
        Scope::Group(g) | Scope::GroupInterval(_, g) => !groups[g],
        Scope::Stream(s) | Scope::StreamInterval(_, s) | Scope::Stage(s, _) => !streams[s],
    });
    for (g, &reached) in groups.iter().enumerate() {
        if reached {
            forecast_erlang_b_group(col, g);
        }
    }
}

/// A loss group under the Erlang B conditions (direct Poisson streams, one
/// server a call, no reservation, no redials, constant servers) whose
/// uncertain streams share one factor: its figures averaged over the
/// factor's law.
fn forecast_erlang_b_group(col: &mut Column, g: usize) {
    let model = col.model;
    let grp = &model.groups[g];
    let n = grp.servers;
    if grp.servers_change() || n > FORECAST_MAX_SERVERS {
        return;
    }
    if direct_poisson_load(model, g, false).is_none() {
        return;
    }
    let users = users(model, g);
    if users.iter().any(|&(s, _)| model.streams[s].retry.is_some()) {
        return;
    }
    // The known load and the load that moves with the one factor.
    let (mut known, mut moving) = (0.0, 0.0);
    let mut factor: Option<(u64, &crate::dist::Law)> = None;
    for &(s, _) in &users {
        let st = &model.streams[s];
        let Some(rate) = poisson_rate(st) else { return };
        let a = rate * st.holding.mean();
        match &st.forecast {
            None => known += a,
            Some(f) => {
                if factor.is_some_and(|(key, _)| key != f.key) {
                    return; // two independent factors: no one-dimensional integral
                }
                factor = Some((f.key, &f.law));
                moving += a;
            }
        }
    }
    let Some((_, law)) = factor else { return };
    let load = |f: f64| known + moving * f;
    let b = |f: f64| erlang_b::blocking(n, load(f)).unwrap_or(f64::NAN);
    let e = |h: &dyn Fn(f64) -> f64| factor_expectation(law, h).unwrap_or(f64::NAN);
    // E[F] = 1 by construction; by the same quadrature, so that the
    // ratio's errors cancel.
    let mean_f = e(&|f| f);
    let time_congestion = e(&|f| b(f));
    let lost_share = e(&|f| f * b(f)) / mean_f;
    let carried = e(&|f| load(f) * (1.0 - b(f)));
    let overflow = e(&|f| load(f) * b(f));
    col.group(
        g,
        Figure::TimeCongestion,
        FORECAST_ERLANG_B,
        time_congestion,
    );
    col.group(g, Figure::CarriedTraffic, FORECAST_ERLANG_B, carried);
    col.group(
        g,
        Figure::Occupancy,
        FORECAST_ERLANG_B,
        carried / f64::from(n),
    );
    col.group(g, Figure::OverflowMean, FORECAST_ERLANG_B, overflow);
    for &(s, _) in &users {
        let st = &model.streams[s];
        if st.route.len() != 1 {
            continue;
        }
        let Some(rate) = poisson_rate(st) else {
            continue;
        };
        let a = rate * st.holding.mean();
        let (loss, carried) = if st.forecast.is_some() {
            (lost_share, a * e(&|f| f * (1.0 - b(f))))
        } else {
            (time_congestion, a * (1.0 - time_congestion))
        };
        col.stream(s, Figure::FirstAttemptBlocking, FORECAST_ERLANG_B, loss);
        col.stream(s, Figure::Loss, FORECAST_ERLANG_B, loss);
        col.stream(s, Figure::CarriedTraffic, FORECAST_ERLANG_B, carried);
    }
}

/// A map of the quadrature variable (the node to the factor, or to the
/// log-weight).
type Map = Box<dyn Fn(f64) -> f64>;

/// E\[h(F)\] for a forecast factor F of `law` (gamma or lognormal, mean
/// 1); `None` for another law.
///
/// # Numerics
///
/// The trapezoid rule over a uniform grid of 801 nodes in the variable in
/// which the density is smooth and decays on both sides: z = (ln F - mu) /
/// sigma on [-12, 12] for the lognormal; y = ln F for the gamma (density
/// of y proportional to exp(k y - k e^y), k = 1 / cv^2), on the span where
/// that exponent is within 60 of its peak. The weights are normalised by
/// their own sum, so the law's normalising constant is not needed. For a
/// smooth integrand decaying at both ends the trapezoid rule converges
/// geometrically (Trefethen and Weideman, SIAM Review 56(3), 2014).
pub fn factor_expectation(law: &crate::dist::Law, h: &dyn Fn(f64) -> f64) -> Option<f64> {
    const NODES: usize = 801;
    let cv = law.cv();
    if !(cv > 0.0 && cv.is_finite()) {
        return None;
    }
    let (lo, hi, x_of, log_weight): (f64, f64, Map, Map) = match law.name() {
        "lognormal" => {
            let sigma2 = (1.0 + cv * cv).ln();
            let (sigma, mu) = (sigma2.sqrt(), -0.5 * sigma2);
            (
                -12.0,
                12.0,
                Box::new(move |z| (mu + sigma * z).exp()),
                Box::new(|z| -0.5 * z * z),
            )
        }
        "gamma" => {
            let k = 1.0 / (cv * cv);
            // Exponent less its peak (at y = 0): k (y + 1 - e^y) <= 0.
            let rel = move |y: f64| k * (y + 1.0 - y.exp());
            let step = 0.05 * cv.min(1.0);
            let (mut lo, mut hi) = (0.0, 0.0);
            while rel(lo) > -60.0 {
                lo -= step;
            }
            while rel(hi) > -60.0 {
                hi += step;
            }
            (lo, hi, Box::new(f64::exp), Box::new(rel))
        }
        _ => return None,
    };
    let dx = (hi - lo) / (NODES - 1) as f64;
    let (mut num, mut den) = (0.0, 0.0);
    for i in 0..NODES {
        let t = lo + i as f64 * dx;
        let end = if i == 0 || i + 1 == NODES { 0.5 } else { 1.0 };
        let w = end * log_weight(t).exp();
        num += w * h(x_of(t));
        den += w;
    }
    Some(num / den)
}

/// Label of the redial fixed point.
const REDIAL_FIXED_POINT: &str = "Erlang B with redials, fixed point (approx.)";

fn erlang_b_group(col: &mut Column, g: usize) {
    let model = col.model;
    let Some((a, exponential)) = direct_poisson_load(model, g, false) else {
        return;
    };
    let users = users(model, g);
    let redials = users.iter().any(|&(s, _)| model.streams[s].retry.is_some());
    if redials {
        if users
            .iter()
            .all(|&(s, _)| model.streams[s].route.len() == 1)
        {
            redial_group(col, g, &users);
        } else {
            // Redials of calls that also overflow elsewhere: no fixed point
            // here; Erlang B of the fresh traffic, named for what it ignores.
            let Ok(b) = erlang_b::blocking(model.groups[g].servers, a) else {
                return;
            };
            col.group(g, Figure::TimeCongestion, "Erlang B, no redials", b);
            for &(s, _) in &users {
                let st = &model.streams[s];
                if st.route.len() == 1 && st.retry.is_some() {
                    col.stream(s, Figure::FirstAttemptBlocking, "Erlang B, no redials", b);
                    col.stream(s, Figure::Loss, "Erlang B, no redials", b);
                }
            }
        }
        return;
    }
    let n = model.groups[g].servers;
    let Ok(b) = erlang_b::blocking(n, a) else {
        return;
    };
    col.group(g, Figure::TimeCongestion, "Erlang B", b);
    col.group(g, Figure::CarriedTraffic, "Erlang B", a * (1.0 - b));
    col.group(
        g,
        Figure::Occupancy,
        "Erlang B",
        a * (1.0 - b) / f64::from(n),
    );
    col.group(g, Figure::OverflowMean, "Erlang B: A*B", a * b);
    if exponential && let Ok(m) = overflow::riordan(n, a) {
        col.group(g, Figure::OverflowPeakedness, "Riordan", m.peakedness());
    }
    for (s, _) in users {
        let st = &model.streams[s];
        if st.route.len() != 1 {
            continue; // blocked only when every group on the route is full
        }
        col.stream(s, Figure::FirstAttemptBlocking, "Erlang B", b);
        col.stream(s, Figure::Loss, "Erlang B", b);
        if let Some(rate) = poisson_rate(st) {
            col.stream(
                s,
                Figure::CarriedTraffic,
                "Erlang B",
                rate * st.holding.mean() * (1.0 - b),
            );
        }
    }
}

/// A loss group offered only direct Poisson streams that end on it, some of
/// which redial: the redial fixed point with each stream's own chances
/// (the last repeating, as the simulator does) and attempt limit, so no
/// behaviour of the retry is dropped. Every attempt meets the same
/// blocking `B`, which is then also the time congestion; blocked attempts
/// occupy the virtual overflow group, so its mean is `B` x attempt traffic.
fn redial_group(col: &mut Column, g: usize, users: &[(usize, usize)]) {
    let model = col.model;
    let mut streams = Vec::with_capacity(users.len());
    for &(s, _) in users {
        let st = &model.streams[s];
        let Some(rate) = poisson_rate(st) else { return };
        let (chances, max_attempts) = match &st.retry {
            Some(r) => (r.chances.clone(), r.max_attempts),
            None => (Vec::new(), 1),
        };
        streams.push(redial_fixed_point::RedialingStream {
            traffic: rate * st.holding.mean(),
            chances,
            max_attempts: Some(max_attempts),
        });
    }
    let n = model.groups[g].servers;
    let Ok(f) = redial_fixed_point::solve(n, &streams) else {
        return;
    };
    let b = f.blocking;
    col.group(g, Figure::TimeCongestion, REDIAL_FIXED_POINT, b);
    col.group(
        g,
        Figure::CarriedTraffic,
        REDIAL_FIXED_POINT,
        f.carried_traffic(),
    );
    col.group(
        g,
        Figure::Occupancy,
        REDIAL_FIXED_POINT,
        f.carried_traffic() / f64::from(n),
    );
    col.group(
        g,
        Figure::OverflowMean,
        REDIAL_FIXED_POINT,
        b * f.attempt_traffic,
    );
    for (i, &(s, _)) in users.iter().enumerate() {
        let shares = f.streams[i];
        col.stream(s, Figure::FirstAttemptBlocking, REDIAL_FIXED_POINT, b);
        col.stream(s, Figure::AttemptBlocking, REDIAL_FIXED_POINT, b);
        col.stream(
            s,
            Figure::AttemptsPerCall,
            REDIAL_FIXED_POINT,
            shares.attempts_per_call,
        );
        col.stream(s, Figure::Loss, REDIAL_FIXED_POINT, shares.loss);
        col.stream(
            s,
            Figure::CarriedTraffic,
            REDIAL_FIXED_POINT,
            streams[i].traffic * (1.0 - shares.loss),
        );
    }
}

fn multirate_group(col: &mut Column, g: usize) {
    let model = col.model;
    let users = users(model, g);
    if users.iter().all(|&(s, _)| model.streams[s].units == 1) {
        return;
    }
    if direct_poisson_load(model, g, true).is_none()
        || users
            .iter()
            .any(|&(s, _)| model.streams[s].route.len() != 1)
    {
        return;
    }
    let classes: Vec<(f64, u32)> = users
        .iter()
        .map(|&(s, _)| {
            let st = &model.streams[s];
            (
                poisson_rate(st).unwrap_or(0.0) * st.holding.mean(),
                st.units,
            )
        })
        .collect();
    let Ok(blocking) = multirate::kaufman_roberts(model.groups[g].servers, &classes) else {
        return;
    };
    let mut carried = 0.0;
    for (i, &(s, _)) in users.iter().enumerate() {
        let b = blocking[i];
        let (a, units) = classes[i];
        let method = if model.streams[s].retry.is_some() {
            "Kaufman-Roberts, no redials"
        } else {
            "Kaufman-Roberts"
        };
        col.stream(s, Figure::FirstAttemptBlocking, method, b);
        col.stream(s, Figure::Loss, method, b);
        if model.streams[s].retry.is_none() {
            col.stream(s, Figure::CarriedTraffic, method, a * (1.0 - b));
        }
        carried += a * f64::from(units) * (1.0 - b);
    }
    if users.iter().all(|&(s, _)| model.streams[s].retry.is_none()) {
        col.group(g, Figure::CarriedTraffic, "Kaufman-Roberts", carried);
        col.group(
            g,
            Figure::Occupancy,
            "Kaufman-Roberts",
            carried / f64::from(model.groups[g].servers),
        );
    }
}

fn queue_group(col: &mut Column, g: usize) {
    let model = col.model;
    let grp = &model.groups[g];
    let places = match grp.queue {
        Queue::Unlimited => None,
        Queue::Limited(q) => Some(q),
        Queue::None => return,
    };
    if grp.reserve > 0 || grp.overflow_after_s.is_some() {
        return;
    }
    let users = users(model, g);
    let mut traffic = 0.0;
    let mut holding = None::<f64>;
    let mut patience = None::<Option<f64>>;
    let mut exponential = true;
    let mut cv = None::<f64>;
    for &(s, _) in &users {
        let st = &model.streams[s];
        if st.route.len() != 1 || st.units != 1 || st.retry.is_some() {
            return;
        }
        let Some(rate) = poisson_rate(st) else { return };
        let h = st.holding.mean();
        if holding.is_some_and(|x| (x - h).abs() > 1e-12 * h) {
            return; // M/M/N and M/G/N need one holding-time mean
        }
        holding = Some(h);
        exponential &= st.holding.is_exponential();
        let c = st.holding.cv();
        if !c.is_finite() || cv.is_some_and(|x| (x - c).abs() > 1e-12 * x.max(1.0)) {
            return; // the two-moment methods need one cv
        }
        cv = Some(c);
        if !same_exponential_patience(&mut patience, st) {
            return;
        }
        traffic += rate * h;
    }
    let (Some(h), Some(patience)) = (holding, patience) else {
        return;
    };
    let n = grp.servers;
    if let Some(places) = places {
        if exponential {
            finite_queue_group(col, g, &users, places, traffic, h, patience);
        }
        return;
    }
    if !exponential {
        if patience.is_none()
            && let Some(cv) = cv
        {
            general_queue(col, g, &users, traffic, h, cv);
        }
        return;
    }
    match patience {
        None => {
            let (Ok(c), Ok(w)) = (
                erlang_c::wait_probability(n, traffic),
                erlang_c::mean_wait(n, traffic, h),
            ) else {
                return;
            };
            col.group(g, Figure::CarriedTraffic, "Erlang C", traffic);
            col.group(g, Figure::Occupancy, "Erlang C", traffic / f64::from(n));
            for &(s, _) in &users {
                erlang_c_stream(col, s, "Erlang C", (n, traffic, h), (c, w));
            }
        }
        Some(theta) => {
            let Ok(ea) = erlang_a::solve(n, traffic, h, theta) else {
                return;
            };
            col.group(
                g,
                Figure::CarriedTraffic,
                "Erlang A",
                traffic * (1.0 - ea.abandonment),
            );
            col.group(
                g,
                Figure::Occupancy,
                "Erlang A",
                traffic * (1.0 - ea.abandonment) / f64::from(n),
            );
            for &(s, _) in &users {
                let st = &model.streams[s];
                col.stream(s, Figure::WaitProbability, "Erlang A", ea.wait_probability);
                col.stream(s, Figure::Abandonment, "Erlang A", ea.abandonment);
                col.stream(s, Figure::Loss, "Erlang A", ea.abandonment);
                col.stream(s, Figure::WaitMean, "Erlang A", ea.mean_wait_answered_s);
                if let Some(aw) = st.answer_within_s {
                    col.stream(s, Figure::ServiceLevel, "Erlang A", ea.service_level(aw));
                }
            }
        }
    }
}

/// A limited queue (M/M/N/K, or M/M/N/K+M with exponential patience):
/// blocking (waiting room full), waiting, answered mean wait, abandonment,
/// loss and service level, exact from the birth-death chain.
fn finite_queue_group(
    col: &mut Column,
    g: usize,
    users: &[(usize, usize)],
    places: u32,
    traffic: f64,
    h: f64,
    patience: Option<f64>,
) {
    let model = col.model;
    let n = model.groups[g].servers;
    let Ok(f) = finite_queue::solve(n, places, traffic, h, patience) else {
        return;
    };
    let method = if patience.is_some() {
        FINITE_QUEUE_PATIENCE
    } else {
        FINITE_QUEUE
    };
    col.group(g, Figure::CarriedTraffic, method, f.carried_traffic);
    col.group(
        g,
        Figure::Occupancy,
        method,
        f.carried_traffic / f64::from(n),
    );
    col.group(g, Figure::TimeCongestion, method, f.all_busy);
    for &(s, _) in users {
        let st = &model.streams[s];
        col.stream(s, Figure::FirstAttemptBlocking, method, f.blocking);
        col.stream(s, Figure::Loss, method, f.loss());
        col.stream(s, Figure::WaitProbability, method, f.wait_probability);
        col.stream(s, Figure::WaitMean, method, f.mean_wait_answered_s);
        col.stream(s, Figure::Abandonment, method, f.abandonment);
        if let Some(rate) = poisson_rate(st) {
            col.stream(
                s,
                Figure::CarriedTraffic,
                method,
                rate * st.holding.mean() * f.answered,
            );
        }
        if let Some(aw) = st.answer_within_s {
            col.stream(s, Figure::ServiceLevel, method, f.service_level(aw));
        }
    }
}

/// Labels of the finite queue (exact).
const FINITE_QUEUE: &str = "M/M/N/K, limited queue";
const FINITE_QUEUE_PATIENCE: &str = "M/M/N/K+M, limited queue with patience";

/// M/G/N without patience: Pollaczek-Khinchine (one agent, exact),
/// Cosmetatos (constant holding) or Allen-Cunneen for the mean wait and the
/// probability of waiting. Nobody is lost and every call is carried, for
/// any holding law, so those figures are exact whatever the method.
fn general_queue(
    col: &mut Column,
    g: usize,
    users: &[(usize, usize)],
    traffic: f64,
    h: f64,
    cv: f64,
) {
    let n = col.model.groups[g].servers;
    let Ok(w) = queue_general::mean_wait(n, traffic, h, cv) else {
        return;
    };
    let method = w.method.label();
    col.group(g, Figure::CarriedTraffic, NO_LOSS, traffic);
    col.group(g, Figure::Occupancy, NO_LOSS, traffic / f64::from(n));
    for &(s, _) in users {
        col.stream(s, Figure::WaitProbability, method, w.wait_probability);
        // The simulated figure is the mean wait of answered calls; with no
        // patience every call is answered, so it is the mean over all calls.
        col.stream(s, Figure::WaitMean, method, w.mean_wait_s);
        col.stream(s, Figure::Loss, NO_LOSS, 0.0);
    }
}

/// Label of the figures that follow from a stable queue without patience
/// losing nobody (exact for any holding law).
const NO_LOSS: &str = "unlimited queue, no loss";

fn engset_group(col: &mut Column, g: usize) {
    let model = col.model;
    let grp = &model.groups[g];
    let users = users(model, g);
    if grp.queue != Queue::None || grp.reserve > 0 || users.len() != 1 {
        return;
    }
    let s = users[0].0;
    let st = &model.streams[s];
    let Arrivals::Sources { count, idle } = &st.arrivals else {
        return;
    };
    if st.route.len() != 1 || st.units != 1 || st.retry.is_some() {
        return;
    }
    let beta = st.holding.mean() / idle.mean();
    let Ok(e) = engset::solve(*count, grp.servers, beta) else {
        return;
    };
    col.group(g, Figure::TimeCongestion, "Engset", e.time_congestion);
    col.group(g, Figure::CarriedTraffic, "Engset", e.carried_traffic);
    col.group(
        g,
        Figure::Occupancy,
        "Engset",
        e.carried_traffic / f64::from(grp.servers),
    );
    col.stream(
        s,
        Figure::FirstAttemptBlocking,
        "Engset (call congestion)",
        e.call_congestion,
    );
    col.stream(
        s,
        Figure::Loss,
        "Engset (call congestion)",
        e.call_congestion,
    );
    col.stream(s, Figure::CarriedTraffic, "Engset", e.carried_traffic);
}

/// Loss of streams routed first group -> final group, each parcel by its
/// own interrupted Poisson process (Kuczura 1973) on the final group solved
/// as a chain, where the final group is offered only overflow from Erlang B
/// first groups (exponential holding) and direct Poisson traffic; the
/// final group's time congestion is the direct traffic's loss.
fn equivalent_random(col: &mut Column) {
    let model = col.model;
    for f in 0..model.groups.len() {
        let fg = &model.groups[f];
        if fg.queue != Queue::None || fg.reserve > 0 {
            continue;
        }
        let mut primaries: Vec<(usize, f64, u32)> = Vec::new();
        let mut direct = 0.0;
        let mut ok = true;
        let mut two_step = Vec::new();
        for (s, pos) in users(model, f) {
            let st = &model.streams[s];
            let Some(rate) = poisson_rate(st) else {
                ok = false;
                break;
            };
            if st.units != 1 || st.retry.is_some() || !st.holding.is_exponential() {
                ok = false;
                break;
            }
            match (pos, st.route.len()) {
                (0, 1) => direct += rate * st.holding.mean(),
                (1, 2) => {
                    let p = st.route[0] as usize;
                    match direct_poisson_load(model, p, false) {
                        Some((a, true)) => {
                            if !primaries.iter().any(|x| x.0 == p) {
                                primaries.push((p, a, model.groups[p].servers));
                            }
                            two_step.push((s, p));
                        }
                        _ => {
                            ok = false;
                            break;
                        }
                    }
                }
                _ => {
                    ok = false;
                    break;
                }
            }
        }
        if !ok || primaries.is_empty() {
            continue;
        }
        // Every stream of each primary group must overflow to this group.
        if primaries.iter().any(|&(p, _, _)| {
            users(model, p).iter().any(|&(s, _)| {
                model.streams[s]
                    .route
                    .get(1)
                    .is_none_or(|&x| x as usize != f)
            })
        }) {
            continue;
        }
        let list: Vec<(f64, u32)> = primaries.iter().map(|&(_, a, n)| (a, n)).collect();
        let Ok(parcels) = overflow::parcel_losses(&list, direct, fg.servers) else {
            continue;
        };
        for (s, p) in two_step {
            if let Some(i) = primaries.iter().position(|x| x.0 == p) {
                col.stream(s, Figure::Loss, PARCEL_METHOD, parcels.loss[i]);
            }
        }
        for (s, pos) in users(model, f) {
            if pos == 0 && model.streams[s].route.len() == 1 {
                col.stream(s, Figure::Loss, PARCEL_METHOD, parcels.direct_loss);
            }
        }
        col.group(
            f,
            Figure::TimeCongestion,
            PARCEL_METHOD,
            parcels.direct_loss,
        );
    }
}

/// Label of the per-parcel overflow method.
const PARCEL_METHOD: &str = "IPP overflow parcels, Kuczura (approx.)";

/// Mean Poisson rate (calls/s) over `[t0, t1)` after the warm-up, for
/// constant and peak-profile Poisson arrivals ([`Arrivals::rate_over`]);
/// `None` for other arrivals, which these references do not cover.
fn window_rate(a: &Arrivals, t0: f64, t1: f64) -> Option<f64> {
    match a {
        Arrivals::Poisson { .. } | Arrivals::Profile { .. } => a.rate_over(t0, t1),
        _ => None,
    }
}

/// Offered traffic (E) of `streams` over `[t0, t1)` by the forecast: each
/// Poisson or peak-profile stream's mean rate times its mean holding time
/// (other arrivals add nothing).
fn window_load<'a>(streams: impl Iterator<Item = &'a Stream>, t0: f64, t1: f64) -> f64 {
    streams
        .filter_map(|st| Some(window_rate(&st.arrivals, t0, t1)? * st.holding.mean()))
        .sum()
}

/// A loss group offered direct Poisson traffic of which some follows a peak
/// profile: Erlang B of the average load for the whole period, and of each
/// interval's own load (a stationary approximation that ignores the lag of
/// calls in progress), and the modified offered load per interval, so the report shows how far the peak moves from them.
/// Interval rates come from [`window_rate`] alone.
fn profile_group(col: &mut Column, g: usize) {
    let model = col.model;
    let grp = &model.groups[g];
    let Some(users) = profiled_loss_users(model, g) else {
        return;
    };
    let n = grp.servers;
    let length = model.plan.length_s;
    let load =
        |t0: f64, t1: f64| window_load(users.iter().map(|&(s, _)| &model.streams[s]), t0, t1);
    if let Ok(b) = erlang_b::blocking(n, load(0.0, length)) {
        for &(s, _) in &users {
            col.stream(s, Figure::Loss, "Erlang B, average load", b);
        }
        col.group(g, Figure::TimeCongestion, "Erlang B, average load", b);
    }
    let width = model.plan.interval_s.unwrap_or(length);
    let mol = modified_offered_load(model, g, &users);
    for bin in 0..model.plan.interval_count() {
        let t0 = bin as f64 * width;
        let t1 = (t0 + width).min(length);
        let Ok(b) = erlang_b::blocking(n, load(t0, t1)) else {
            continue;
        };
        match &mol {
            // The stream's loss gets the reference that follows the lag of
            // calls in progress; the stationary value of the interval's
            // load moves to the group's time congestion (the same share
            // for Poisson arrivals), so both stay in view.
            Some(mol) => {
                for (i, &(s, _)) in users.iter().enumerate() {
                    col.stream_interval(bin, s, Figure::Loss, MOL, mol[bin].loss[i]);
                }
                col.group_interval(bin, g, Figure::TimeCongestion, INTERVAL_LOAD, b);
            }
            None => {
                for &(s, _) in &users {
                    col.stream_interval(bin, s, Figure::Loss, INTERVAL_LOAD, b);
                }
            }
        }
    }
}

/// Label of the stationary per-interval reference.
const INTERVAL_LOAD: &str = "Erlang B, interval load";

/// Label of the modified-offered-load reference.
const MOL: &str = "Erlang B, modified offered load (approx.)";

/// The modified-offered-load reference of one reporting interval.
struct MolInterval {
    /// Per user of the group (in `users` order): calls lost over calls
    /// offered in the interval, `∫ λ_s E_N(m) dt / ∫ λ_s dt`.
    loss: Vec<f64>,
}

/// The modified-offered-load (MOL) reference of a loss group offered
/// Poisson streams (some with peak profiles), any holding law: the mean
/// `m(t)` of the same traffic on unlimited servers, and at each instant the
/// blocking `E_N(m(t))`; per interval and stream, the loss is the
/// call-weighted mean of that blocking (Simpson's rule, 16 panels per
/// piece of constant rates).
///
/// # Formula
///
/// `m_s(t) = E[∫_{t-S}^{t} λ_s(u) du]` (the M_t/G/∞ mean; for exponential
/// holding the solution of `m' = λ(t) - m/h`). With the rate a step
/// function, `λ_s(u) = λ_0 + Σ_k Δ_k 1{u >= c_k}`, this is
/// `m_s(t) = λ_0 h + Σ_{c_k <= t} Δ_k h (1 - P(S_e > t - c_k))`, `S_e` the
/// stationary-excess law ([`crate::dist::Law::residual_tail`]): exact for
/// every law. Before the measured period the warm-up runs at the first
/// rate, from all history at a steady start (`m = λ_0 h`) or from an
/// empty system (a step of `λ_0` at the warm-up's start), as the simulator
/// does. Source: D. L. Jagerman, "Nonstationary blocking in telephone
/// traffic", Bell System Technical Journal 54 (1975); W. A. Massey and
/// W. Whitt, "An analysis of the modified offered-load approximation for
/// the nonstationary Erlang loss model", Annals of Applied Probability 4
/// (1994); the M_t/G/∞ mean as in S. G. Eick, W. A. Massey and W. Whitt,
/// "The physics of the M_t/G/∞ queue", Operations Research 41 (1993). An
/// approximation, named so.
fn modified_offered_load(
    model: &Model,
    g: usize,
    users: &[(usize, usize)],
) -> Option<Vec<MolInterval>> {
    let n = model.groups[g].servers;
    let plan = &model.plan;
    let length = plan.length_s;
    let width = plan.interval_s.unwrap_or(length);
    // The rate changes inside the measured period, and the bin edges.
    let mut cuts: Vec<f64> = (0..=plan.interval_count())
        .map(|b| (b as f64 * width).min(length))
        .collect();
    for &(s, _) in users {
        if let Arrivals::Profile { interval_s, rates } = &model.streams[s].arrivals {
            cuts.extend(
                (1..rates.len())
                    .map(|i| i as f64 * interval_s)
                    .filter(|&t| t < length),
            );
        }
    }
    cuts.sort_by(f64::total_cmp);
    cuts.dedup();
    let m = InfiniteServerLoad::new(model, users.iter().map(|&(s, _)| &model.streams[s]));
    let bins = plan.interval_count();
    let mut offered = vec![vec![0.0; users.len()]; bins];
    let mut lost = vec![vec![0.0; users.len()]; bins];
    for piece in cuts.windows(2) {
        let (t0, t1) = (piece[0], piece[1]);
        if !(t1 > t0) {
            continue;
        }
        let bin = (((t0 / width) + 1e-9).floor() as usize).min(bins - 1);
        let mut failed = false;
        let mean = simpson_mean(t0, t1, |t| {
            erlang_b::blocking(n, m.at(t)).unwrap_or_else(|_| {
                failed = true;
                f64::NAN
            })
        });
        if failed {
            return None;
        }
        let mean_blocking = mean.clamp(0.0, 1.0);
        for (i, &(s, _)) in users.iter().enumerate() {
            let rate = window_rate(&model.streams[s].arrivals, t0, t1).unwrap_or(0.0);
            offered[bin][i] += rate * (t1 - t0);
            lost[bin][i] += rate * (t1 - t0) * mean_blocking;
        }
    }
    Some(
        (0..bins)
            .map(|b| MolInterval {
                loss: (0..users.len())
                    .map(|i| {
                        if offered[b][i] > 0.0 {
                            lost[b][i] / offered[b][i]
                        } else {
                            f64::NAN
                        }
                    })
                    .collect(),
            })
            .collect(),
    )
}

/// The streams of group `g` when it is a loss group offered only direct
/// single-unit Poisson streams without redials, at least one of them on a
/// peak profile: where Erlang B of a window's load is the book's figure.
fn profiled_loss_users(model: &Model, g: usize) -> Option<Vec<(usize, usize)>> {
    let grp = &model.groups[g];
    let users = users(model, g);
    if grp.queue != Queue::None || grp.reserve > 0 || users.is_empty() {
        return None;
    }
    let mut profiled = false;
    for &(s, _) in &users {
        let st = &model.streams[s];
        if st.route.len() != 1 || st.units != 1 || st.retry.is_some() {
            return None;
        }
        match st.arrivals {
            Arrivals::Poisson { .. } => {}
            Arrivals::Profile { .. } => profiled = true,
            _ => return None,
        }
    }
    profiled.then_some(users)
}

/// The busy hour of a scenario with a peak profile: the run of whole
/// reporting intervals, about one hour long, with the most offered traffic
/// by the forecast (the profile's rates times the mean holding times), as
/// a practitioner sizes on it; and Erlang B of that load for each stream
/// ending on a loss group where Erlang B is the book's figure.
#[derive(Debug, Clone, PartialEq)]
pub struct BusyHour {
    /// First interval of the window, counted from 0.
    pub first: usize,
    /// Number of intervals in the window.
    pub count: usize,
    /// Start and end of the window, seconds from the end of the warm-up.
    pub start_s: f64,
    /// End of the window.
    pub end_s: f64,
    /// Offered traffic in the window by the forecast, every stream with a
    /// rate (E).
    pub offered: f64,
    /// Per stream: Erlang B of its group's busy-hour load, where it applies.
    pub erlang_b: Vec<Option<f64>>,
}

/// Name of the busy-hour reference.
pub const BUSY_HOUR_METHOD: &str = "Erlang B, busy-hour load";

/// The busy hour of `model`, when it reports intervals and some stream
/// follows a peak profile.
pub fn busy_hour(model: &Model) -> Option<BusyHour> {
    let width = model.plan.interval_s?;
    let bins = model.plan.interval_count();
    if bins == 0 || !(model.streams.iter()).any(|s| matches!(s.arrivals, Arrivals::Profile { .. }))
    {
        return None;
    }
    let count = ((3600.0 / width).round() as usize).clamp(1, bins);
    let window = |first: usize| {
        let t0 = first as f64 * width;
        let t1 = ((first + count) as f64 * width).min(model.plan.length_s);
        (t0, t1)
    };
    let mut best: Option<(usize, f64)> = None;
    for first in 0..=bins - count {
        let (t0, t1) = window(first);
        let a = window_load(model.streams.iter(), t0, t1);
        if best.is_none_or(|(_, b)| a > b) {
            best = Some((first, a));
        }
    }
    let (first, offered) = best?;
    let (t0, t1) = window(first);
    let mut erlang_b_of = vec![None; model.streams.len()];
    for g in 0..model.groups.len() {
        let Some(users) = profiled_loss_users(model, g) else {
            continue;
        };
        if model.groups[g].servers_change()
            || (users.iter()).any(|&(s, _)| model.streams[s].forecast.is_some())
        {
            continue; // a book value at the forecast's mean load (see the module)
        }
        let a = window_load(users.iter().map(|&(s, _)| &model.streams[s]), t0, t1);
        if let Ok(b) = erlang_b::blocking(model.groups[g].servers, a) {
            for &(s, _) in &users {
                erlang_b_of[s] = Some(b);
            }
        }
    }
    Some(BusyHour {
        first,
        count,
        start_s: t0,
        end_s: t1,
        offered,
        erlang_b: erlang_b_of,
    })
}

/// The formula view of `check`: the same values as the run's formula column.
pub fn formula_view(model: &Model) -> HashMap<FigureId, Formula> {
    formula_column(model)
}

/// The book's per-interval staffing references of an agent group: for each
/// reporting interval, the offered load by the forecast and the agents
/// Erlang C (no patience) or Erlang A (exponential patience) asks for at
/// that load (stationary, independent per interval); and the same at the
/// interval's mean of the infinite-server load `m(t)` (the modified offered
/// load, which follows the lag of calls in progress: Jagerman 1975; for
/// staffing, Jennings, Mandelbaum, Massey and Whitt 1996; approx.).
#[derive(Debug, Clone, PartialEq)]
pub struct IntervalReference {
    /// Offered traffic of the interval by the forecast (E).
    pub load: f64,
    /// Agents for the goals at `load` (`None`: no formula covers them).
    pub stationary: Option<u32>,
    /// Mean of `m(t)` over the interval (E).
    pub modified_load: f64,
    /// Agents for the goals at `modified_load`.
    pub modified: Option<u32>,
}

/// The methods of [`IntervalReference::stationary`] and
/// [`IntervalReference::modified`] for group `g`: Erlang B for a loss
/// group, Erlang A where its callers have patience, Erlang C otherwise.
pub fn reference_methods(model: &Model, g: usize) -> (&'static str, &'static str) {
    if model.groups[g].queue == Queue::None {
        return (INTERVAL_LOAD, "Erlang B, modified offered load (approx.)");
    }
    let patience = (model.streams.iter())
        .any(|s| s.patience.is_some() && s.route.first() == Some(&(g as u32)));
    if patience {
        (
            "Erlang A, interval load",
            "Erlang A, modified offered load (approx.)",
        )
    } else {
        (
            "Erlang C, interval load",
            "Erlang C, modified offered load (approx.)",
        )
    }
}

/// The per-interval references of group `g` (see [`IntervalReference`]),
/// over the streams whose route starts at `g`: for a loss group the
/// servers Erlang B gives for `loss` (a blocking share), for a queue the
/// agents for the delay `goals`. The holding time is the streams'
/// traffic-weighted mean; the patience, when every such stream has one,
/// their mean patience (Erlang A takes it as exponential: an approximation
/// for other laws).
pub fn interval_references(
    model: &Model,
    g: usize,
    goals: &crate::formulas::delay_goals::DelayGoals,
    loss: Option<f64>,
) -> Vec<IntervalReference> {
    use crate::formulas::delay_goals;
    let plan = &model.plan;
    let width = plan.interval_s.unwrap_or(plan.length_s);
    let streams: Vec<&Stream> = (model.streams.iter())
        .filter(|s| s.route.first() == Some(&(g as u32)))
        .collect();
    let traffic_mean = |f: &dyn Fn(&Stream) -> f64| -> f64 {
        let weights: f64 = streams.iter().map(|s| load_of(s)).sum();
        if weights > 0.0 {
            streams.iter().map(|s| load_of(s) * f(s)).sum::<f64>() / weights
        } else {
            f64::NAN
        }
    };
    let holding = traffic_mean(&|s: &Stream| s.holding.mean());
    let patience = (streams.iter().all(|s| s.patience.is_some()) && !streams.is_empty())
        .then(|| traffic_mean(&|s: &Stream| s.patience.as_ref().map_or(f64::NAN, |p| p.mean())));
    let loss_group = model.groups[g].queue == Queue::None;
    let agents = |a: f64| {
        if loss_group {
            loss.and_then(|b| erlang_b::servers_for(a, b).ok())
        } else {
            delay_goals::agents_for(a, holding, patience, goals).ok()
        }
    };
    (0..plan.interval_count())
        .map(|b| {
            let t0 = b as f64 * width;
            let t1 = (t0 + width).min(plan.length_s);
            let load = window_load(streams.iter().copied(), t0, t1);
            let modified_load = mean_infinite_server_load(model, &streams, t0, t1);
            IntervalReference {
                load,
                stationary: agents(load),
                modified_load,
                modified: agents(modified_load),
            }
        })
        .collect()
}

/// A stream's offered traffic at its first rate (a weight).
fn load_of(s: &Stream) -> f64 {
    s.arrivals.initial_rate().unwrap_or(0.0) * s.holding.mean()
}

/// The infinite-server load `m(t)` of some streams: the M_t/G/∞ mean,
/// exact for a piecewise-constant rate and any holding law (Eick, Massey
/// and Whitt 1993): each rate step `d` at time `c` adds
/// `d h (1 - residual_tail(t - c))`, the calls of the step still in
/// progress at `t`. A steady start begins at the first rate's load; an
/// empty start steps up from nothing at the start of the warm-up. The one
/// home of `m(t)` for the modified offered load and the staffing
/// references.
struct InfiniteServerLoad<'a> {
    /// Per stream: its holding law, its load at the start, and its rate
    /// steps.
    streams: Vec<(&'a crate::dist::Law, f64, RateSteps)>,
}

/// Rate steps of a stream: (time after the warm-up, change in calls per
/// second).
type RateSteps = Vec<(f64, f64)>;

impl<'a> InfiniteServerLoad<'a> {
    fn new(model: &Model, streams: impl Iterator<Item = &'a Stream>) -> InfiniteServerLoad<'a> {
        let plan = &model.plan;
        let streams = streams
            .map(|s| {
                let first = s.arrivals.initial_rate().unwrap_or(0.0);
                let h = s.holding.mean();
                let mut steps = Vec::new();
                let mut base = 0.0;
                match plan.start {
                    crate::scenario::Start::Steady => base = first * h,
                    crate::scenario::Start::Empty => steps.push((-plan.warmup_s, first)),
                }
                if let Arrivals::Profile { interval_s, rates } = &s.arrivals {
                    for i in 1..rates.len() {
                        steps.push((i as f64 * interval_s, rates[i] - rates[i - 1]));
                    }
                }
                (&s.holding, base, steps)
            })
            .collect();
        InfiniteServerLoad { streams }
    }

    /// `m(t)`, `t` seconds after the warm-up (erlangs, never below 0).
    fn at(&self, t: f64) -> f64 {
        (self.streams.iter())
            .map(|(law, base, steps)| {
                let h = law.mean();
                base + steps
                    .iter()
                    .filter(|&&(c, _)| c <= t)
                    .map(|&(c, d)| d * h * (1.0 - law.residual_tail(t - c)))
                    .sum::<f64>()
            })
            .sum::<f64>()
            .max(0.0)
    }

    /// The times of the rate steps.
    fn changes(&self) -> impl Iterator<Item = f64> + '_ {
        (self.streams.iter()).flat_map(|(_, _, steps)| steps.iter().map(|&(c, _)| c))
    }
}

/// The mean of `f` over `[a, b)` by Simpson's rule over 16 panels.
fn simpson_mean(a: f64, b: f64, mut f: impl FnMut(f64) -> f64) -> f64 {
    const PANELS: usize = 16;
    let step = (b - a) / PANELS as f64;
    let mut sum = 0.0;
    for k in 0..=PANELS {
        let w = if k == 0 || k == PANELS {
            1.0
        } else if k % 2 == 1 {
            4.0
        } else {
            2.0
        };
        sum += w * f(a + k as f64 * step);
    }
    sum * step / 3.0 / (b - a)
}

/// The mean over `[t0, t1)` (seconds after the warm-up) of the
/// infinite-server load `m(t)` of `streams` ([`InfiniteServerLoad`]);
/// Simpson's rule over 16 panels per piece of constant rates.
fn mean_infinite_server_load(model: &Model, streams: &[&Stream], t0: f64, t1: f64) -> f64 {
    if !(t1 > t0) {
        return f64::NAN;
    }
    let load = InfiniteServerLoad::new(model, streams.iter().copied());
    // Pieces between the rate changes inside the span.
    let mut cuts = vec![t0, t1];
    cuts.extend(load.changes().filter(|&c| c > t0 && c < t1));
    cuts.sort_by(f64::total_cmp);
    cuts.dedup();
    let integral: f64 = (cuts.windows(2))
        .map(|piece| simpson_mean(piece[0], piece[1], |t| load.at(t)) * (piece[1] - piece[0]))
        .sum();
    integral / (t1 - t0)
}
