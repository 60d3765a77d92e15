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

/// Worked shifts in a scenario become the group's schedule: agents on duty
/// per interval, a break taking its agents off, shrinkage on top, nobody
/// after the last shift ends.
#[test]
fn worked_shifts_compile_to_the_agents_on_duty() {
    let text = r#"
[simulation]
length = "4h"
interval = "30m"
clock_start = "08:00"

[[group]]
name = "agents"
interval = "30m"
shrinkage = "20%"
queue = "unlimited"
shifts = [
  { start = "08:00", length = "3h", agents = 10, breaks = [{ after = "1h", length = "30m" }] },
  { start = "09:00", length = "2h", agents = 5 },
]

[[stream]]
name = "calls"
arrivals = { law = "poisson", rate = "100/h" }
holding = { law = "exponential", mean = "3m" }
route = ["agents"]
"#;
    let model = busyhour::scenario::parse(text, "shifts.toml", ".".as_ref(), "shifts").unwrap();
    let s = model.groups[0].schedule.as_ref().unwrap();
    // 08:00 10, 08:30 10, 09:00 break: 5, 09:30 15, 10:00 15, 10:30 15,
    // then nobody.
    assert_eq!(s.scheduled, [10, 10, 5, 15, 15, 15, 0]);
    // floor(n x 0.8).
    assert_eq!(s.present, [8, 8, 4, 12, 12, 12, 0]);
    assert_eq!(model.groups[0].servers, 12);
}

fn clinic_with(shift_types: &str) -> std::path::PathBuf {
    let text = std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios/clinic-day.toml"),
    )
    .unwrap();
    let start = text.find("shift_types = [").unwrap();
    let end = start + text[start..].find("\n]\n").unwrap() + 3;
    let edited = format!("{}{shift_types}\n{}", &text[..start], &text[end..]);
    let dir = std::env::temp_dir().join(format!("busyhour-shifts-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(format!("clinic-{}.toml", edited.len()));
    std::fs::write(&path, edited).unwrap();
    path
}

/// A shift plan that cannot be made is refused in one line, exit 2, naming
/// why: an interval no allowed shift reaches (by its clock time), or
/// quotas that leave some interval short.
#[test]
fn impossible_shift_plans_are_refused_in_one_line() {
    let refused = |types: &str, quoted: &str| {
        let path = clinic_with(types);
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_busyhour"))
            .args(["size", path.to_str().unwrap(), "--group", "agents"])
            .args(["--goal", "service_level>=80%", "--per-interval"])
            .args(["--replications", "10", "-q"])
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{err}");
        assert_eq!(err.trim_end().lines().count(), 1, "{err}");
        assert!(err.contains(quoted), "{err}");
        let _ = std::fs::remove_file(path);
    };
    refused(
        r#"shift_types = [{ length = "4h", earliest = "08:00", latest = "12:00" }]"#,
        "no allowed shift type is on duty from 16:00 to 16:30",
    );
    refused(
        r#"shift_types = [{ length = "9h", earliest = "08:00", latest = "08:00", max_agents = 5 }]"#,
        "max_agents limits leave no cover",
    );
}
