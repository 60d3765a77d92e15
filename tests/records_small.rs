//! Hand-made call-record files with answers worked out by hand: interval
//! splitting across midnight and across days, daylight-saving days, time
//! and duration formats, column choice, and bad rows.

use busyhour::records::time::days_from_civil;
use busyhour::records::{self, Analysis, Columns, Interval, Options, RecordsError};

fn analyse(text: &str) -> Result<Analysis, RecordsError> {
    records::analyse_reader(text.as_bytes(), "calls.csv", &Options::default())
}

fn analyse_with(text: &str, opts: &Options) -> Result<Analysis, RecordsError> {
    records::analyse_reader(text.as_bytes(), "calls.csv", opts)
}

/// The interval of `a` starting at local `hh:mm` on the given date with the
/// given offset (seconds east of UTC).
fn at(a: &Analysis, date: (i64, u32, u32), hh: u32, mm: u32, offset_s: i32) -> &Interval {
    let day = days_from_civil(date.0, date.1, date.2);
    let clock = hh * 3600 + mm * 60;
    a.timeline
        .intervals
        .iter()
        .find(|iv| iv.day == day && iv.clock_s == clock && iv.offset_s == offset_s)
        .unwrap_or_else(|| panic!("no interval {date:?} {hh:02}:{mm:02} offset {offset_s}"))
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() < 1e-9
}

#[test]
fn a_call_across_midnight_is_split_between_days() {
    // 23:50 for 20 minutes: 10 minutes in the 23:45 interval (600/900 E)
    // and 10 minutes in the next day's 00:00 interval.
    // A call the next day keeps that day in the timeline.
    let a =
        analyse("start,duration\n2025-03-03T23:50:00+01:00,1200\n2025-03-04T12:00:00+01:00,0\n")
            .unwrap();
    assert_eq!(a.timeline.days.len(), 2);
    assert!(a.timeline.days.iter().all(|d| d.len == 96));
    let before = at(&a, (2025, 3, 3), 23, 45, 3600);
    let after = at(&a, (2025, 3, 4), 0, 0, 3600);
    assert_eq!((before.calls, after.calls), (1, 0));
    assert!(close(before.carried_traffic, 600.0 / 900.0), "{before:?}");
    assert!(close(after.carried_traffic, 600.0 / 900.0), "{after:?}");
    let total: f64 = a
        .timeline
        .intervals
        .iter()
        .map(|iv| iv.carried_traffic * 900.0)
        .sum();
    assert!(close(total, 1200.0));
    // Without a call on the next day, the timeline ends at midnight and the
    // 10 minutes after it are left out (a day with no call measured).
    let a = analyse("start,duration\n2025-03-03T23:50:00+01:00,1200\n").unwrap();
    assert_eq!(a.timeline.days.len(), 1);
    let total: f64 = a
        .timeline
        .intervals
        .iter()
        .map(|iv| iv.carried_traffic * 900.0)
        .sum();
    assert!(close(total, 600.0));
}

#[test]
fn a_call_over_a_day_fills_every_interval_it_spans() {
    // 12:00 UTC for 26 h: 104 whole quarter hours of 1 E each, from
    // 2025-03-03 12:00 to 2025-03-04 14:00; nothing else.
    let a =
        analyse("start,duration\n2025-03-03T12:00:00Z,26:00:00\n2025-03-04T20:00:00Z,0\n").unwrap();
    let full: Vec<_> = a
        .timeline
        .intervals
        .iter()
        .filter(|iv| iv.carried_traffic > 0.0)
        .collect();
    assert_eq!(full.len(), 104);
    assert!(full.iter().all(|iv| close(iv.carried_traffic, 1.0)));
    assert_eq!(full[0].clock_s, 12 * 3600);
    assert_eq!(full[103].day, days_from_civil(2025, 3, 4));
    assert_eq!(full[103].clock_s, 13 * 3600 + 45 * 60);
    // The call counts once, where it starts; the busy hour of the first
    // day is 12:00-13:00 (the first full hour, ties go to the earlier).
    assert_eq!(a.totals.calls, 2);
    let p = &a.busy_hour.daily[0];
    assert_eq!((p.start_clock_s, p.calls), (12 * 3600, 1));
    assert!(close(p.carried_traffic, 1.0));
}

#[test]
fn spring_forward_day_has_23_hours() {
    // Central European time: on 2025-03-30 the clocks go from 02:00 +01:00
    // to 03:00 +02:00. A call at 01:50 +01:00 for 20 minutes ends at 03:10
    // +02:00: 10 minutes in the 01:45 interval, 10 in the 03:00 interval.
    let text = "start,duration\n\
        2025-03-29T12:00:00+01:00,60\n\
        2025-03-30T01:50:00+01:00,1200\n\
        2025-03-30T03:05:00+02:00,60\n\
        2025-03-31T12:00:00+02:00,60\n";
    let a = analyse(text).unwrap();
    let lens: Vec<usize> = a.timeline.days.iter().map(|d| d.len).collect();
    assert_eq!(lens, [96, 92, 96]);
    let before = at(&a, (2025, 3, 30), 1, 45, 3600);
    let after = at(&a, (2025, 3, 30), 3, 0, 7200);
    assert!(close(before.carried_traffic, 600.0 / 900.0));
    // 10 minutes of the first call and the whole 60 s of the second.
    assert!(close(after.carried_traffic, 660.0 / 900.0));
    assert_eq!(
        after.start_utc_s - before.start_utc_s,
        900,
        "real time runs on"
    );
    assert!(
        a.timeline
            .intervals
            .iter()
            .all(|iv| !(iv.day == days_from_civil(2025, 3, 30) && iv.clock_s / 3600 == 2))
    );
}

#[test]
fn fall_back_day_has_25_hours() {
    // On 2025-10-26 the clocks go from 03:00 +02:00 back to 02:00 +01:00:
    // the hour from 02:00 is lived twice. A call at 02:50 +02:00 for 20
    // minutes ends at 02:10 +01:00.
    let text = "start,duration\n\
        2025-10-25T12:00:00+02:00,60\n\
        2025-10-26T02:50:00+02:00,1200\n\
        2025-10-26T02:05:00+01:00,30\n\
        2025-10-27T12:00:00+01:00,60\n";
    let a = analyse(text).unwrap();
    let lens: Vec<usize> = a.timeline.days.iter().map(|d| d.len).collect();
    assert_eq!(lens, [96, 100, 96]);
    let first = at(&a, (2025, 10, 26), 2, 45, 7200);
    let second = at(&a, (2025, 10, 26), 2, 0, 3600);
    assert_eq!((first.calls, second.calls), (1, 1));
    assert!(close(first.carried_traffic, 600.0 / 900.0));
    assert!(close(second.carried_traffic, 630.0 / 900.0));
    assert_eq!(second.start_utc_s - first.start_utc_s, 900);
}

#[test]
fn times_and_durations_in_every_accepted_form() {
    // The same two calls written four ways give the same intervals.
    let forms = [
        "start,duration\n2025-03-03T10:05:00Z,0:03:00\n2025-03-03T10:20:00Z,90\n",
        "start,duration\n2025-03-03 10:05:00,3:00\n2025-03-03 10:20:00,1m30s\n",
        "start,duration\n1740996300,180\n1740997200,90.0\n",
        "\u{feff}start,duration\r\n\"2025-03-03T11:05:00+01:00\",\"180\"\r\n\r\n2025-03-03T11:20:00+01:00,90\r\n",
    ];
    let mut seen = Vec::new();
    for text in forms {
        let a = analyse(text).unwrap_or_else(|e| panic!("{text:?}: {e}"));
        let busy: Vec<(u32, u64, f64)> = a
            .timeline
            .intervals
            .iter()
            .filter(|iv| iv.calls > 0 || iv.carried_traffic > 0.0)
            .map(|iv| (iv.clock_s, iv.calls, (iv.carried_traffic * 900.0).round()))
            .collect();
        seen.push(busy);
    }
    // UTC 10:00 is 11:00 at +01:00: compare clock positions modulo the offset.
    assert_eq!(seen[0], vec![(36000, 1, 180.0), (36900, 1, 90.0)]);
    assert_eq!(seen[1], seen[0]);
    assert_eq!(seen[2], seen[0]);
    assert_eq!(seen[3], vec![(39600, 1, 180.0), (40500, 1, 90.0)]);
}

#[test]
fn columns_by_name_and_outcomes() {
    let text = "id,start_time,agent,duration_s,outcome\n\
        1,2025-03-03T10:00:00Z,a,100,answered\n\
        2,2025-03-03T10:01:00Z,b,0,BLOCKED\n\
        3,2025-03-03T10:02:00Z,c,30, abandoned \n\
        4,2025-03-03T10:03:00Z,d,200,Completed\n";
    let opts = Options {
        columns: Columns {
            start: Some("start_time".into()),
            duration: Some("duration_s".into()),
            outcome: Some("outcome".into()),
            ..Columns::default()
        },
        ..Options::default()
    };
    let a = analyse_with(text, &opts).unwrap();
    assert_eq!(
        (
            a.totals.calls,
            a.totals.answered,
            a.totals.blocked,
            a.totals.abandoned
        ),
        (4, 2, 1, 1)
    );
    // Carried: answered calls only (300 s); offered adds the mean answered
    // holding time (150 s) for each of the two unanswered attempts.
    let iv = at(&a, (2025, 3, 3), 10, 0, 0);
    assert!(close(iv.carried_traffic, 300.0 / 900.0));
    assert!(close(iv.offered_traffic, 600.0 / 900.0));
    assert_eq!(a.holding.count, 2);
    // The default column names find the same columns.
    let b = analyse(text).unwrap();
    assert_eq!(b.totals, a.totals);
}

#[test]
fn bad_rows_name_their_line() {
    let cases = [
        (
            "start,duration\n2025-03-03T10:00:00Z,60\n2025-03-03T25:00:00Z,60\n",
            "calls.csv:3:",
            "hour",
        ),
        (
            "start,duration\n2025-03-03T10:00:00Z,-5\n",
            "calls.csv:2:",
            "'-5' is not a holding time",
        ),
        (
            "start,duration\n2025-03-03T10:00:00Z\n",
            "calls.csv:2:",
            "too few",
        ),
        (
            "start,duration\n\n\n2025-03-03T10:00:00Z,\n",
            "calls.csv:4:",
            "\"duration\" is empty",
        ),
        (
            "start,duration,outcome\n2025-03-03T10:00:00Z,5,maybe\n",
            "calls.csv:2:",
            "'maybe'",
        ),
        (
            "start,duration\n2025-03-03T10:00:00Z,5\n2025-03-03 10:00:00,5\n",
            "calls.csv:3:",
            "the same way",
        ),
        (
            "start,duration\n2025-03-03T10:00:00Z,8d\n",
            "calls.csv:2:",
            "'8d' is not a holding time",
        ),
        (
            "start,duration\n2025-03-03T10:00:00Z,200:00:00\n",
            "calls.csv:2:",
            "7-day limit",
        ),
    ];
    for (text, place, what) in cases {
        let e = analyse(text).unwrap_err();
        assert!(matches!(e, RecordsError::BadRow { .. }), "{text:?}: {e}");
        let msg = e.to_string();
        assert!(
            msg.starts_with(place) && msg.contains(what) && msg.contains("--skip-bad"),
            "{msg}"
        );
        assert!(!msg.contains('\n'));
    }
}

#[test]
fn skip_bad_counts_and_reports() {
    let text = "start,duration\n\
        2025-03-03T10:00:00Z,60\n\
        yesterday,60\n\
        2025-03-03T10:05:00Z,x\n\
        2025-03-03T10:10:00Z,120\n";
    let opts = Options {
        skip_bad: true,
        ..Options::default()
    };
    let a = analyse_with(text, &opts).unwrap();
    assert_eq!((a.rows.read, a.rows.skipped, a.totals.calls), (4, 2, 2));
    assert!(a.rows.skipped_examples[0].starts_with("calls.csv:3:"));
    assert!(a.rows.skipped_examples[1].starts_with("calls.csv:4:"));
    let all_bad = analyse_with("start,duration\nx,1\n", &opts).unwrap_err();
    assert!(
        all_bad.to_string().contains("all 1 rows were bad"),
        "{all_bad}"
    );
}

#[test]
fn whole_file_problems() {
    let e = analyse("").unwrap_err().to_string();
    assert!(e.contains("empty"), "{e}");
    let e = analyse("start,duration\n").unwrap_err().to_string();
    assert!(e.contains("no rows"), "{e}");
    let e = analyse("when,how_long\n2025-03-03T10:00:00Z,5\n")
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("no start column")
            && e.contains("\"when\", \"how_long\"")
            && e.contains("--start"),
        "{e}"
    );
    let opts = Options {
        columns: Columns {
            outcome: Some("result".into()),
            ..Columns::default()
        },
        ..Options::default()
    };
    let e = analyse_with("start,duration\n2025-03-03T10:00:00Z,5\n", &opts)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("no outcome column") && e.contains("\"result\""),
        "{e}"
    );
    // +05:30 and +00:00 do not share an hour grid.
    let hourly = Options {
        interval_s: 3600,
        ..Options::default()
    };
    let e = analyse_with(
        "start,duration\n2025-03-03T10:00:00Z,5\n2025-03-03T10:00:00+05:30,5\n",
        &hourly,
    )
    .unwrap_err()
    .to_string();
    assert!(e.starts_with("calls.csv:3:") && e.contains("+05:30"), "{e}");
    // A stray year makes a span far beyond the limit.
    let e = analyse("start,duration\n2025-03-03T10:00:00Z,5\n1925-03-03T10:00:00Z,5\n")
        .unwrap_err()
        .to_string();
    assert!(e.contains("1925-03-03") && e.contains("limit"), "{e}");
    let e = records::analyse(
        std::path::Path::new("/nonexistent/calls.csv"),
        &Options::default(),
    )
    .unwrap_err()
    .to_string();
    assert!(e.starts_with("/nonexistent/calls.csv: cannot read"), "{e}");
}

#[test]
fn day_filter_keeps_the_timeline_but_not_the_analysis() {
    // Monday 2025-03-03 busy, Saturday 2025-03-08 busier: with mon-fri the
    // busy hour is Monday's.
    let text = "start,duration\n\
        2025-03-03T09:00:00Z,3600\n\
        2025-03-08T15:00:00Z,3600\n\
        2025-03-08T15:00:00Z,3600\n";
    let opts = Options {
        days: Some(records::DayFilter::parse("mon-fri").unwrap()),
        ..Options::default()
    };
    let a = analyse_with(text, &opts).unwrap();
    assert_eq!(a.timeline.days.len(), 6);
    assert_eq!(a.timeline.selected_days().count(), 5);
    assert_eq!(
        (a.totals.calls, a.rows.outside_days, a.holding.count),
        (1, 2, 1)
    );
    let tc = a.busy_hour.time_consistent.unwrap();
    assert_eq!(tc.start_clock_s, 9 * 3600);
    // Mean over the five weekdays of 1 E on Monday and 0 on the others.
    assert!(close(tc.carried_traffic, 0.2), "{tc:?}");
    assert!(close(a.busy_hour.average_daily_peak_carried.unwrap(), 0.2));
    let none = Options {
        days: Some(records::DayFilter::parse("sun").unwrap()),
        ..Options::default()
    };
    let e = analyse_with(text, &none).unwrap_err().to_string();
    assert!(e.contains("--days 'sun'"), "{e}");
}

#[test]
fn line_numbers_count_blank_lines_and_quoted_line_breaks() {
    let text = "start,duration,note\n\n2025-03-03T10:00:00Z,5,\"two\nlines\"\n\n\n2025-03-03T10:00:00Z,x,ok\n";
    let e = analyse(text).unwrap_err().to_string();
    assert!(e.starts_with("calls.csv:7:"), "{e}");
    let last = "start,duration\n2025-03-03T10:00:00Z,5\n2025-03-03T10:00:00Z,x";
    let e = analyse(last).unwrap_err().to_string();
    assert!(e.starts_with("calls.csv:3:"), "{e}");
}

#[test]
fn a_start_split_into_date_and_time_columns_reads_as_the_joined_timestamp() {
    // The same three calls, one file with a start column, one with a date
    // column and a time-of-day column (by the default names "date" and
    // "time", and by named columns), give the same timeline: the joined
    // text 2026-03-02T08:15:30 is the definition (ISO 8601 date and time).
    let joined = "start,duration,outcome\n\
        2026-03-02T08:15:30,120,answered\n\
        2026-03-02T23:59:00,120,answered\n\
        2026-03-03T07:05:00.5,60,blocked\n";
    let split = "date,time,duration,outcome\n\
        2026-03-02,08:15:30,120,answered\n\
        2026-03-02,23:59:00,120,answered\n\
        2026/03/03,7:05:00.5,60,blocked\n";
    let named = "call day,clock,duration,outcome\n\
        2026-03-02,08:15:30,120,answered\n\
        2026-03-02,23:59,120,answered\n\
        2026-03-03,07:05:00.5,60,blocked\n";
    let signature = |a: &Analysis| -> Vec<(i64, u32, u64, u64)> {
        (a.timeline.intervals.iter())
            .filter(|iv| iv.calls > 0 || iv.carried_traffic > 0.0)
            .map(|iv| {
                (
                    iv.day,
                    iv.clock_s,
                    iv.calls,
                    (iv.carried_traffic * 900.0).round() as u64,
                )
            })
            .collect()
    };
    let a = analyse(joined).unwrap();
    let b = analyse(split).unwrap();
    let c = analyse_with(
        named,
        &Options {
            columns: Columns {
                start: Some("clock".into()),
                date: Some("call day".into()),
                ..Columns::default()
            },
            ..Options::default()
        },
    )
    .unwrap();
    let day = days_from_civil(2026, 3, 2);
    // Worked by hand: 08:15:30 for 120 s in the 08:15 interval; 23:59 for
    // 120 s: 60 s before midnight, 60 s in the next day's 00:00 interval;
    // 07:05 blocked: a call but no carried time.
    assert_eq!(
        signature(&a),
        vec![
            (day, 8 * 3600 + 900, 1, 120),
            (day, 23 * 3600 + 2700, 1, 60),
            (day + 1, 0, 0, 60),
            (day + 1, 7 * 3600, 1, 0),
        ]
    );
    assert_eq!(signature(&b), signature(&a));
    assert_eq!(signature(&c), signature(&a));
    assert_eq!(b.totals, a.totals);
    assert_eq!(b.time_kind, a.time_kind);
}

#[test]
fn a_bad_date_or_time_of_day_names_the_file_line_and_column() {
    let cases = [
        // (file, expected pieces of the message)
        (
            "date,time,duration\n2026-03-02,08:00,60\n2026-02-30,08:00,60\n",
            vec!["calls.csv:3:", "column \"date\"", "'2026-02-30'", "day"],
        ),
        (
            "date,time,duration\n2026-03-02,08:00,60\n02.03.2026,08:00,60\n",
            vec![
                "calls.csv:3:",
                "column \"date\"",
                "'02.03.2026'",
                "not a date",
            ],
        ),
        (
            "date,time,duration\n2026-03-02,8:00,60\n2026-03-02,24:10,60\n",
            vec!["calls.csv:3:", "column \"time\"", "'24:10'", "hour"],
        ),
        (
            "date,time,duration\n2026-03-02,8:7,60\n",
            vec![
                "calls.csv:2:",
                "column \"time\"",
                "'8:7'",
                "not a time of day",
            ],
        ),
        (
            "date,time,duration\n2026-03-02,,60\n",
            vec!["calls.csv:2:", "column \"time\" is empty"],
        ),
        (
            "date,time,duration\n,08:00,60\n",
            vec!["calls.csv:2:", "column \"date\" is empty"],
        ),
        // A time of day with no date column: the message says how to name one.
        (
            "time,duration\n08:00,60\n",
            vec!["calls.csv:2:", "time of day without a date", "--date"],
        ),
    ];
    for (text, pieces) in cases {
        let e = analyse(text).unwrap_err().to_string();
        assert!(!e.contains('\n'), "{e}");
        for p in pieces {
            assert!(e.contains(p), "{text:?}: {e} lacks {p}");
        }
    }
    // A named date column that is not there is a header error naming --date.
    let e = analyse_with(
        "time,duration\n08:00,60\n",
        &Options {
            columns: Columns {
                date: Some("day".into()),
                ..Columns::default()
            },
            ..Options::default()
        },
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("no date column") && e.contains("--date"), "{e}");
    // Skipped bad dates are counted as start-time problems.
    let a = analyse_with(
        "date,time,duration\n2026-03-02,08:00,60\n2026-13-02,08:00,60\n",
        &Options {
            skip_bad: true,
            ..Options::default()
        },
    )
    .unwrap();
    assert_eq!(a.rows.skipped_by_kind.get("start time"), Some(&1));
}
