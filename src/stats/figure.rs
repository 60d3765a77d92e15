//! The figures busyhour reports: one [`Figure`] per concept, whose single
//! description gives its JSON name, label, unit, range and estimator. Adding
//! a figure is one arm here and one place in [`super::observe`] where its
//! per-replication observation is taken; the compiler finds every `match`
//! that must learn it.

use serde::Serialize;

/// A figure of the design.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Figure {
    /// Measured calls (first attempts in the measured period).
    OfferedCalls,
    /// Offered traffic of first attempts (E).
    OfferedTraffic,
    /// Attempts per measured call, redials included.
    AttemptsPerCall,
    /// Share of first attempts that found the whole route full.
    FirstAttemptBlocking,
    /// Share of attempts that found the whole route full.
    AttemptBlocking,
    /// Share of resolved calls never served.
    Loss,
    /// Share of resolved calls that ended by abandoning.
    Abandonment,
    /// Share of resolved calls that waited on some attempt.
    WaitProbability,
    /// Carried traffic (E): a stream's calls, or a group's busy servers.
    CarriedTraffic,
    /// Mean wait of answered calls (s).
    WaitMean,
    /// Median wait of answered calls (s).
    WaitP50,
    /// 90th percentile of the wait of answered calls (s).
    WaitP90,
    /// 99th percentile of the wait of answered calls (s).
    WaitP99,
    /// Share of resolved calls answered within `answer_within`.
    ServiceLevel,
    /// Interruptions by calls of higher priority per answered call
    /// (`preemption`): a share when a call is interrupted at most once.
    Interruptions,
    /// Busy servers over servers (time average).
    Occupancy,
    /// Share of time with every server busy.
    TimeCongestion,
    /// Calls that found the group unable to serve or hold them.
    OverflowCalls,
    /// Mean occupancy of the virtual overflow group (E).
    OverflowMean,
    /// Mean square of that occupancy.
    OverflowMeanSquare,
    /// Variance over mean of that occupancy.
    OverflowPeakedness,
    /// Entries into a stage of a call flow (measured calls, every attempt).
    StageCalls,
    /// Share of a stage's entries served to the end of the stage.
    StageServed,
    /// Share of a stage's entries that ended the call after the stage.
    StageFinished,
    /// Share of a stage's entries that gave up waiting there.
    StageAbandoned,
    /// Share of a stage's entries that found no server and no place there.
    StageBlocked,
}

/// How a figure is printed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Unit {
    /// A share in [0, 1], printed as a percentage.
    Share,
    /// Erlangs.
    Erlangs,
    /// Seconds.
    Seconds,
    /// A number of calls.
    Count,
    /// A plain ratio.
    Ratio,
}

/// How replications are combined into one estimate and its interval.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Estimator {
    /// Sum of the numerators over the sum of the denominators across
    /// replications; 95% interval by the delta method with Student-t
    /// quantiles over replications. For shares of calls, widened to at least
    /// the exact Clopper-Pearson interval of the pooled counts, so rare or
    /// unseen events never give a zero-width interval.
    RatioOfSums,
    /// Mean across replications of a time average over the fixed measured
    /// length (equivalently a ratio of sums with a constant denominator);
    /// Student-t interval.
    TimeAverage,
    /// Mean across replications of a per-replication count; Student-t.
    MeanOfReplications,
    /// Mean across replications of each replication's own percentile of
    /// the wait; Student-t interval. It answers "the percentile of a typical
    /// period", which is not the long-run percentile of all calls.
    MeanOfReplicationPercentiles,
    /// (pooled mean square - pooled mean^2) / pooled mean of the virtual
    /// overflow group's occupancy; 95% interval from the jackknife
    /// (leave one replication out) standard error, Student-t.
    PooledVarianceToMean,
}

impl Estimator {
    /// The name written in the JSON.
    pub fn name(self) -> &'static str {
        match self {
            Estimator::RatioOfSums => "ratio_of_sums",
            Estimator::TimeAverage => "time_average",
            Estimator::MeanOfReplications => "mean_of_replications",
            Estimator::MeanOfReplicationPercentiles => "mean_of_replication_percentiles",
            Estimator::PooledVarianceToMean => "pooled_variance_to_mean",
        }
    }
}

/// The values a figure can take; intervals are cut to them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Range {
    /// Smallest value.
    pub min: f64,
    /// Largest value.
    pub max: f64,
}

impl Range {
    const SHARE: Range = Range { min: 0.0, max: 1.0 };
    const NON_NEGATIVE: Range = Range {
        min: 0.0,
        max: f64::INFINITY,
    };
    const AT_LEAST_ONE: Range = Range {
        min: 1.0,
        max: f64::INFINITY,
    };

    /// `x` moved into the range.
    pub fn clamp(self, x: f64) -> f64 {
        if x.is_nan() {
            x
        } else {
            x.max(self.min).min(self.max)
        }
    }
}

/// Every figure, in the order of the design.
pub const ALL: [Figure; 26] = [
    Figure::OfferedCalls,
    Figure::OfferedTraffic,
    Figure::AttemptsPerCall,
    Figure::FirstAttemptBlocking,
    Figure::AttemptBlocking,
    Figure::Loss,
    Figure::Abandonment,
    Figure::WaitProbability,
    Figure::CarriedTraffic,
    Figure::WaitMean,
    Figure::WaitP50,
    Figure::WaitP90,
    Figure::WaitP99,
    Figure::ServiceLevel,
    Figure::Interruptions,
    Figure::Occupancy,
    Figure::TimeCongestion,
    Figure::OverflowCalls,
    Figure::OverflowMean,
    Figure::OverflowMeanSquare,
    Figure::OverflowPeakedness,
    Figure::StageCalls,
    Figure::StageServed,
    Figure::StageFinished,
    Figure::StageAbandoned,
    Figure::StageBlocked,
];

impl Figure {
    /// The design's name, used in JSON, CSV, goals and part files.
    pub fn name(self) -> &'static str {
        match self {
            Figure::OfferedCalls => "offered_calls",
            Figure::OfferedTraffic => "offered_traffic",
            Figure::AttemptsPerCall => "attempts_per_call",
            Figure::FirstAttemptBlocking => "first_attempt_blocking",
            Figure::AttemptBlocking => "attempt_blocking",
            Figure::Loss => "loss",
            Figure::Abandonment => "abandonment",
            Figure::WaitProbability => "wait_probability",
            Figure::CarriedTraffic => "carried_traffic",
            Figure::WaitMean => "wait_mean",
            Figure::WaitP50 => "wait_p50",
            Figure::WaitP90 => "wait_p90",
            Figure::WaitP99 => "wait_p99",
            Figure::ServiceLevel => "service_level",
            Figure::Interruptions => "interruptions",
            Figure::Occupancy => "occupancy",
            Figure::TimeCongestion => "time_congestion",
            Figure::OverflowCalls => "overflow_calls",
            Figure::OverflowMean => "overflow_mean",
            Figure::OverflowMeanSquare => "overflow_mean_square",
            Figure::OverflowPeakedness => "overflow_peakedness",
            Figure::StageCalls => "stage_calls",
            Figure::StageServed => "stage_served",
            Figure::StageFinished => "stage_finished",
            Figure::StageAbandoned => "stage_abandoned",
            Figure::StageBlocked => "stage_blocked",
        }
    }

    /// The figure of a design name.
    pub fn from_name(name: &str) -> Option<Figure> {
        ALL.into_iter().find(|f| f.name() == name)
    }

    /// Words for tables.
    pub fn label(self) -> &'static str {
        match self {
            Figure::OfferedCalls => "offered calls",
            Figure::OfferedTraffic => "offered traffic",
            Figure::AttemptsPerCall => "attempts per call",
            Figure::FirstAttemptBlocking => "first-attempt blocking",
            Figure::AttemptBlocking => "attempt blocking",
            Figure::Loss => "loss (calls never served)",
            Figure::Abandonment => "abandonment",
            Figure::WaitProbability => "probability of waiting",
            Figure::CarriedTraffic => "carried traffic",
            Figure::WaitMean => "mean wait (answered)",
            Figure::WaitP50 => "wait, median",
            Figure::WaitP90 => "wait, 90th percentile",
            Figure::WaitP99 => "wait, 99th percentile",
            Figure::ServiceLevel => "service level",
            Figure::Interruptions => "interruptions per answered call",
            Figure::Occupancy => "occupancy",
            Figure::TimeCongestion => "time congestion",
            Figure::OverflowCalls => "overflow calls",
            Figure::OverflowMean => "overflow traffic, mean",
            Figure::OverflowMeanSquare => "overflow traffic, mean square",
            Figure::OverflowPeakedness => "overflow peakedness",
            Figure::StageCalls => "calls entering the stage",
            Figure::StageServed => "served at the stage",
            Figure::StageFinished => "ended after the stage",
            Figure::StageAbandoned => "abandoned at the stage",
            Figure::StageBlocked => "blocked at the stage",
        }
    }

    /// How the figure is printed.
    pub fn unit(self) -> Unit {
        match self {
            Figure::OfferedCalls | Figure::OverflowCalls | Figure::StageCalls => Unit::Count,
            Figure::OfferedTraffic | Figure::CarriedTraffic | Figure::OverflowMean => Unit::Erlangs,
            Figure::WaitMean | Figure::WaitP50 | Figure::WaitP90 | Figure::WaitP99 => Unit::Seconds,
            Figure::AttemptsPerCall
            | Figure::OverflowMeanSquare
            | Figure::OverflowPeakedness
            | Figure::Interruptions => Unit::Ratio,
            Figure::FirstAttemptBlocking
            | Figure::AttemptBlocking
            | Figure::Loss
            | Figure::Abandonment
            | Figure::WaitProbability
            | Figure::ServiceLevel
            | Figure::Occupancy
            | Figure::TimeCongestion
            | Figure::StageServed
            | Figure::StageFinished
            | Figure::StageAbandoned
            | Figure::StageBlocked => Unit::Share,
        }
    }

    /// How replications are combined.
    pub fn estimator(self) -> Estimator {
        match self {
            Figure::AttemptsPerCall
            | Figure::FirstAttemptBlocking
            | Figure::AttemptBlocking
            | Figure::Loss
            | Figure::Abandonment
            | Figure::WaitProbability
            | Figure::WaitMean
            | Figure::ServiceLevel
            | Figure::Interruptions
            | Figure::StageServed
            | Figure::StageFinished
            | Figure::StageAbandoned
            | Figure::StageBlocked => Estimator::RatioOfSums,
            Figure::OfferedTraffic
            | Figure::CarriedTraffic
            | Figure::Occupancy
            | Figure::TimeCongestion
            | Figure::OverflowMean
            | Figure::OverflowMeanSquare => Estimator::TimeAverage,
            Figure::OfferedCalls | Figure::OverflowCalls | Figure::StageCalls => {
                Estimator::MeanOfReplications
            }
            Figure::WaitP50 | Figure::WaitP90 | Figure::WaitP99 => {
                Estimator::MeanOfReplicationPercentiles
            }
            Figure::OverflowPeakedness => Estimator::PooledVarianceToMean,
        }
    }

    /// Whether the figure is a share of calls: a ratio of two counts with the
    /// numerator at most the denominator (the exact binomial bound applies).
    pub fn is_call_share(self) -> bool {
        self.estimator() == Estimator::RatioOfSums && self.unit() == Unit::Share
    }

    /// The values the figure can take.
    pub fn range(self) -> Range {
        match self {
            Figure::AttemptsPerCall => Range::AT_LEAST_ONE,
            f if f.unit() == Unit::Share => Range::SHARE,
            _ => Range::NON_NEGATIVE,
        }
    }

    /// Whether more servers lower the figure (blocking, waits, occupancy)
    /// rather than raise it (service level).
    pub fn falls_with_servers(self) -> bool {
        self != Figure::ServiceLevel
    }

    /// Whether the figure is a key figure of a precision goal for a scope
    /// of that kind: every stream's loss and every group's carried traffic.
    pub fn is_precision_key(self, stream_scope: bool) -> bool {
        if stream_scope {
            self == Figure::Loss
        } else {
            self == Figure::CarriedTraffic
        }
    }

    /// Position in the compact tables (sweeps, formula view); 99 for figures
    /// those tables leave out.
    pub fn compact_order(self) -> usize {
        match self {
            Figure::OfferedTraffic => 0,
            Figure::FirstAttemptBlocking => 1,
            Figure::Loss => 2,
            Figure::Abandonment => 3,
            Figure::WaitProbability => 4,
            Figure::CarriedTraffic => 5,
            Figure::WaitMean => 6,
            Figure::ServiceLevel => 7,
            Figure::Occupancy => 8,
            Figure::TimeCongestion => 9,
            Figure::OverflowMean => 10,
            Figure::OverflowPeakedness => 11,
            _ => 99,
        }
    }
}

impl std::fmt::Display for Figure {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip_and_are_unique() {
        for f in ALL {
            assert_eq!(Figure::from_name(f.name()), Some(f));
        }
        let mut names: Vec<_> = ALL.iter().map(|f| f.name()).collect();
        names.sort_unstable();
        names.dedup();
        assert_eq!(names.len(), ALL.len());
        assert_eq!(Figure::from_name("nonsense"), None);
    }

    #[test]
    fn shares_of_calls_are_ratios_in_the_unit_interval() {
        assert!(Figure::Loss.is_call_share());
        assert!(Figure::ServiceLevel.is_call_share());
        assert!(!Figure::WaitMean.is_call_share());
        assert!(!Figure::Occupancy.is_call_share());
        assert_eq!(Figure::AttemptsPerCall.range().clamp(0.5), 1.0);
        assert_eq!(Figure::Loss.range().clamp(-0.1), 0.0);
    }
}
