//! Sizing a delay system against goals (formulas::delay_goals): the search
//! against the Erlang C inverses (whose own accuracy is tested against M/M/N
//! balance equations in formulas_erlang_c.rs), against a direct scan of
//! Erlang A (the definition of "fewest agents"), and the inverse in traffic
//! against the forward formulas.

use busyhour::formulas::delay_goals::{self, DelayGoals};
use busyhour::formulas::{erlang_a, erlang_c};

fn sl(within: f64, share: f64) -> DelayGoals {
    DelayGoals {
        service_level: Some((within, share)),
        ..Default::default()
    }
}

#[test]
fn without_patience_it_is_the_erlang_c_answer() {
    for a in [0.5, 3.0, 12.0, 47.5, 250.0] {
        for (t, s) in [(20.0, 0.8), (0.0, 0.5), (60.0, 0.95)] {
            let n = delay_goals::agents_for(a, 180.0, None, &sl(t, s)).unwrap();
            assert_eq!(
                n,
                erlang_c::agents_for_service_level(a, 180.0, t, s).unwrap(),
                "A={a} {s} in {t}"
            );
        }
        let goals = DelayGoals {
            mean_wait_s: Some(15.0),
            ..Default::default()
        };
        let n = delay_goals::agents_for(a, 180.0, None, &goals).unwrap();
        assert_eq!(n, erlang_c::agents_for_mean_wait(a, 180.0, 15.0).unwrap());
    }
}

#[test]
fn with_patience_it_is_the_fewest_agents_by_direct_scan() {
    // The definition: the first N at which Erlang A meets every goal.
    for (a, patience) in [(12.0, 60.0), (30.0, 120.0), (5.0, 20.0), (80.0, 300.0)] {
        let goals = DelayGoals {
            service_level: Some((20.0, 0.8)),
            abandonment: Some(0.03),
            ..Default::default()
        };
        let n = delay_goals::agents_for(a, 180.0, Some(patience), &goals).unwrap();
        // (A queue too long for the solver to hold is deep overload: no.)
        let meets = |k: u32| {
            erlang_a::solve(k, a, 180.0, patience)
                .is_ok_and(|q| q.service_level(20.0) >= 0.8 && q.abandonment <= 0.03)
        };
        let scan = (1..10_000).find(|&k| meets(k)).unwrap();
        assert_eq!(n, scan, "A={a} patience {patience}");
        // Callers who give up shorten the queue of those who stay: fewer
        // agents than Erlang C for the same service level (Garnett,
        // Mandelbaum and Reiman 2002).
        // (The service-level goal alone; an abandonment goal may need more.)
        let alone = delay_goals::agents_for(a, 180.0, Some(patience), &sl(20.0, 0.8)).unwrap();
        let c = erlang_c::agents_for_service_level(a, 180.0, 20.0, 0.8).unwrap();
        assert!(
            alone <= c && alone <= n,
            "A={a}: Erlang A {alone}, Erlang C {c}"
        );
    }
    // Very patient callers: Erlang C again.
    let n = delay_goals::agents_for(12.0, 180.0, Some(1e9), &sl(20.0, 0.8)).unwrap();
    assert_eq!(
        n,
        erlang_c::agents_for_service_level(12.0, 180.0, 20.0, 0.8).unwrap()
    );
}

#[test]
fn most_traffic_inverts_the_forward_formulas() {
    for agents in [1u32, 5, 14, 60] {
        let a = delay_goals::traffic_for(agents, 180.0, None, &sl(20.0, 0.8)).unwrap();
        let at = erlang_c::service_level(agents, a, 180.0, 20.0).unwrap();
        assert!((at - 0.8).abs() < 1e-6, "N={agents}: SL {at} at {a} E");
        // And the fewest agents for that load (a hair below) is N again.
        let n = delay_goals::agents_for(a * (1.0 - 1e-9), 180.0, None, &sl(20.0, 0.8)).unwrap();
        assert_eq!(n, agents);
        // Erlang A: an abandonment goal alone.
        let goals = DelayGoals {
            abandonment: Some(0.05),
            ..Default::default()
        };
        let a = delay_goals::traffic_for(agents, 180.0, Some(60.0), &goals).unwrap();
        let q = erlang_a::solve(agents, a, 180.0, 60.0).unwrap();
        assert!(
            (q.abandonment - 0.05).abs() < 1e-6,
            "N={agents}: {}",
            q.abandonment
        );
    }
}

#[test]
fn goals_that_cannot_be_asked_are_refused() {
    assert!(delay_goals::agents_for(10.0, 180.0, None, &DelayGoals::default()).is_err());
    let abandon = DelayGoals {
        abandonment: Some(0.05),
        ..Default::default()
    };
    assert!(delay_goals::agents_for(10.0, 180.0, None, &abandon).is_err());
    assert!(delay_goals::agents_for(10.0, 180.0, None, &sl(20.0, 1.0)).is_err());
    assert!(delay_goals::agents_for(f64::NAN, 180.0, None, &sl(20.0, 0.8)).is_err());
    assert!(delay_goals::traffic_for(10, -1.0, None, &sl(20.0, 0.8)).is_err());
}
