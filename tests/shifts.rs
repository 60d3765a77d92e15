//! The shift cover against exhaustive enumeration: on small cases (with
//! breaks, where the linear relaxation is not integral) every assignment of
//! agents to the allowed shifts is tried in the test, and the cover must be
//! one of the cheapest that covers.

use busyhour::shifts::{self, Break, Shift, ShiftType};
use rand::{RngExt, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// The cheapest paid agent-intervals over every assignment of 0..=most
/// agents to each candidate shift (the reference: plain enumeration).
fn cheapest_by_enumeration(
    requirement: &[u32],
    candidates: &[Shift],
    kind: &[usize],
    types: &[ShiftType],
) -> Option<u64> {
    let most = *requirement.iter().max().unwrap_or(&0);
    let k = candidates.len();
    let mut counts = vec![0u32; k];
    let mut best: Option<u64> = None;
    loop {
        let shifts: Vec<Shift> = (candidates.iter().zip(&counts))
            .map(|(s, &c)| Shift {
                count: c,
                ..s.clone()
            })
            .collect();
        let covered = shifts::coverage(&shifts, requirement.len());
        let within_limits = (types.iter().enumerate()).all(|(k, t)| {
            let agents: u32 = (counts.iter().zip(kind))
                .filter(|&(_, &j)| j == k)
                .map(|(&c, _)| c)
                .sum();
            t.max_agents.is_none_or(|most| agents <= most)
        });
        if within_limits && covered.iter().zip(requirement).all(|(c, r)| c >= r) {
            let cost: u64 = shifts
                .iter()
                .map(|s| u64::from(s.length) * u64::from(s.count))
                .sum();
            best = Some(best.map_or(cost, |b| b.min(cost)));
        }
        // Next assignment (odometer).
        let mut j = 0;
        loop {
            if j == k {
                return best;
            }
            counts[j] += 1;
            if counts[j] <= most {
                break;
            }
            counts[j] = 0;
            j += 1;
        }
    }
}

fn small_case(rng: &mut Xoshiro256PlusPlus) -> (Vec<u32>, Vec<ShiftType>) {
    let intervals = rng.random_range(5..=8);
    let requirement: Vec<u32> = (0..intervals).map(|_| rng.random_range(0..=3)).collect();
    let long = ShiftType {
        length: 5,
        earliest: 0,
        latest: intervals - 5,
        every: 1,
        breaks: vec![Break {
            after: 2,
            length: 1,
        }],
        max_agents: None,
    };
    // Half the cases limit the short shifts (a part-time quota), which
    // the cheapest cover would otherwise use more of.
    let quota = rng.random_bool(0.5).then(|| rng.random_range(1..=4));
    let short = ShiftType {
        length: 2,
        earliest: 0,
        latest: intervals - 2,
        every: 2,
        breaks: Vec::new(),
        max_agents: quota,
    };
    (requirement, vec![long, short])
}

#[test]
fn the_cover_covers_and_no_cheaper_cover_exists() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(17);
    let mut with_breaks_mattering = 0;
    let mut limited = 0;
    for _ in 0..60 {
        let (requirement, types) = small_case(&mut rng);
        let candidates: Vec<Shift> = types.iter().flat_map(ShiftType::shifts).collect();
        let kind: Vec<usize> = (types.iter().enumerate())
            .flat_map(|(k, t)| std::iter::repeat_n(k, t.shifts().count()))
            .collect();
        assert!(candidates.len() <= 8, "keep the enumeration small");
        let reference = cheapest_by_enumeration(&requirement, &candidates, &kind, &types);
        match shifts::cover(&requirement, &types) {
            Ok(c) => {
                let covered = shifts::coverage(&c.shifts, requirement.len());
                for (i, (&have, &need)) in covered.iter().zip(&requirement).enumerate() {
                    assert!(
                        have >= need,
                        "interval {i}: {have} < {need} for {requirement:?}"
                    );
                }
                assert!(c.proven);
                assert_eq!(Some(c.agent_intervals), reference, "{requirement:?}");
                if c.shifts.iter().any(|s| !s.breaks.is_empty()) {
                    with_breaks_mattering += 1;
                }
                if let Some(most) = types[1].max_agents {
                    let short: u32 = (c.shifts.iter())
                        .filter(|s| s.length == 2)
                        .map(|s| s.count)
                        .sum();
                    assert!(short <= most, "quota {most} exceeded: {short}");
                    limited += 1;
                }
            }
            Err(e) => {
                // Only where enumeration finds no cover either (an
                // interval no allowed shift reaches).
                assert_eq!(reference, None, "{requirement:?}: {e}");
            }
        }
    }
    assert!(limited >= 10, "the cases must use the quota: {limited}");
    assert!(
        with_breaks_mattering >= 10,
        "the cases must use shifts with breaks: {with_breaks_mattering}"
    );
}

/// A day of 30-minute intervals, 8-hour shifts with a half-hour break and
/// 4-hour shifts: the cover is at least the requirement's sum (each
/// agent-interval on duty is paid) and at most that plus what the shift
/// grid forces; and moving any one shift's agent away uncovers something
/// or costs the same (no single removal is possible).
#[test]
fn a_day_cover_is_tight() {
    let requirement: Vec<u32> = vec![
        3, 5, 8, 12, 15, 16, 16, 15, 14, 14, 15, 16, 15, 13, 11, 9, 8, 7, 6, 5,
    ];
    let types = vec![
        ShiftType {
            length: 16,
            earliest: 0,
            latest: 4,
            every: 1,
            breaks: vec![Break {
                after: 8,
                length: 1,
            }],
            max_agents: None,
        },
        ShiftType {
            length: 8,
            earliest: 0,
            latest: 12,
            every: 1,
            breaks: Vec::new(),
            max_agents: None,
        },
    ];
    let c = shifts::cover(&requirement, &types).unwrap();
    let need: u64 = requirement.iter().map(|&r| u64::from(r)).sum();
    assert!(c.agent_intervals >= need);
    let covered = shifts::coverage(&c.shifts, requirement.len());
    assert!(covered.iter().zip(&requirement).all(|(c, r)| c >= r));
    for j in 0..c.shifts.len() {
        let mut fewer = c.shifts.clone();
        fewer[j].count -= 1;
        let covered = shifts::coverage(&fewer, requirement.len());
        assert!(
            covered.iter().zip(&requirement).any(|(c, r)| c < r),
            "removing one agent of shift {j} still covers: not the fewest"
        );
    }
}
