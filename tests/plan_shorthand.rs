//! The shorthand: structure, kind inference, expansion, round trip, listing and `plan check`.

use splitdesk::model::units::METRES_PER_MILE;
use splitdesk::model::{
    Amount, AthleteProfile, Plan, RecoveryMode, Segment, SegmentKind, Step, Target,
};
use splitdesk::plan::{describe_line, format_expanded, parse_line, DEFAULT_TOLERANCE_S_PER_KM};

const BASE: &str = "12:00 easy; 5 x (3:00 @ half, 1:00 @ 5k) / 2:00 jog; 8:00 easy";

fn parse(text: &str) -> Vec<Step> {
    parse_line(text).unwrap_or_else(|e| panic!("{text:?}: {e}"))
}

fn named(name: &str) -> Target {
    Target::NamedPace {
        name: name.into(),
        tolerance_s_per_km: DEFAULT_TOLERANCE_S_PER_KM,
    }
}

fn seg(kind: SegmentKind, amount: Amount, target: Target, mode: Option<RecoveryMode>) -> Segment {
    Segment {
        kind,
        amount,
        target,
        mode,
    }
}

fn kinds(steps: &[Step]) -> Vec<SegmentKind> {
    steps
        .iter()
        .map(|s| match s {
            Step::Single(seg) => seg.kind,
            Step::Repeat { .. } => SegmentKind::Work,
        })
        .collect()
}

fn plan_of(steps: Vec<Step>) -> Plan {
    Plan {
        title: "t".into(),
        purpose: "p".into(),
        date: None,
        steps,
    }
}

#[test]
fn base_example_parses_to_the_expected_steps() {
    use SegmentKind::*;
    let expected = vec![
        Step::Single(seg(Warmup, Amount::Duration(720.0), named("easy"), None)),
        Step::Repeat {
            count: 5,
            work: vec![
                seg(Work, Amount::Duration(180.0), named("half"), None),
                seg(Work, Amount::Duration(60.0), named("5k"), None),
            ],
            recovery: Some(seg(
                Recovery,
                Amount::Duration(120.0),
                Target::Open,
                Some(RecoveryMode::Jog),
            )),
        },
        Step::Single(seg(Cooldown, Amount::Duration(480.0), named("easy"), None)),
    ];
    assert_eq!(parse(BASE), expected);
    // Whitespace does not matter; `×`, `+-` and case are accepted.
    assert_eq!(
        parse("12:00easy;5x(3:00@half,1:00@5K)/2:00jog;8:00 EASY"),
        expected
    );
    assert_eq!(
        parse("12:00 easy;\n  5 × (3:00 @ half, 1:00 @ 5k)\n  / 2:00 jog;\n8:00 easy;"),
        expected
    );
}

#[test]
fn expansion_of_a_repeat_block_has_the_right_count_and_order() {
    use SegmentKind::*;
    let plan = plan_of(parse(BASE));
    let ex = plan.expand();
    assert_eq!(ex.len(), 16);
    let got: Vec<(SegmentKind, Option<(u32, u32)>)> =
        ex.iter().map(|e| (e.kind, e.repeat)).collect();
    let mut want = vec![(Warmup, None)];
    for rep in 1..=5 {
        want.push((Work, Some((rep, 5))));
        want.push((Work, Some((rep, 5))));
        if rep < 5 {
            want.push((Recovery, Some((rep, 5))));
        }
    }
    want.push((Cooldown, None));
    assert_eq!(got, want);
    assert_eq!(ex[1].target, named("half"));
    assert_eq!(ex[2].target, named("5k"));
    assert_eq!(ex[3].mode, Some(RecoveryMode::Jog));

    let no_recovery = plan_of(parse("3 x 1km @ 10k"));
    assert_eq!(no_recovery.expand().len(), 3);
}

#[test]
fn amounts_and_targets() {
    let steps = parse(
        "90s; 20min; 1:02:05; 1h; 400m; 1.5km; 2mi; 3:00 @ 4:05/km; 3:00 4:10-4:00/km; \
         3:00 @ 6:30/mi ±10; 3:00 hr 140-150 bpm; 3:00 @ half ±3; 3:00 @ threshold +-2.5s; 3:00 open",
    );
    let got: Vec<(Amount, Target)> = steps
        .iter()
        .filter_map(|s| match s {
            Step::Single(seg) => Some((seg.amount, seg.target.clone())),
            Step::Repeat { .. } => None,
        })
        .collect();
    assert_eq!(got[0].0, Amount::Duration(90.0));
    assert_eq!(got[1].0, Amount::Duration(1200.0));
    assert_eq!(got[2].0, Amount::Duration(3725.0));
    assert_eq!(got[3].0, Amount::Duration(3600.0));
    assert_eq!(got[4].0, Amount::Distance(400.0));
    assert_eq!(got[5].0, Amount::Distance(1500.0));
    assert_eq!(got[6].0, Amount::Distance(2.0 * METRES_PER_MILE));
    // A single pace gets the default ±5 s band.
    let band = Target::PaceRange {
        slow_mps: 1000.0 / 250.0,
        fast_mps: 1000.0 / 240.0,
    };
    assert_eq!(got[7].1, band);
    assert_eq!(got[8].1, band);
    assert_eq!(
        got[9].1,
        Target::PaceRange {
            slow_mps: METRES_PER_MILE / 400.0,
            fast_mps: METRES_PER_MILE / 380.0
        }
    );
    assert_eq!(
        got[10].1,
        Target::HrRange {
            low_bpm: 140.0,
            high_bpm: 150.0
        }
    );
    assert_eq!(
        got[11].1,
        Target::NamedPace {
            name: "half".into(),
            tolerance_s_per_km: 3.0
        }
    );
    assert_eq!(
        got[12].1,
        Target::NamedPace {
            name: "threshold".into(),
            tolerance_s_per_km: 2.5
        }
    );
    assert_eq!(got[13].1, Target::Open);
}

#[test]
fn kind_inference() {
    use SegmentKind::*;
    // No anchors: everything is steady.
    assert_eq!(kinds(&parse("45:00 easy")), vec![Steady]);
    assert_eq!(
        kinds(&parse("10:00 easy; 30:00 hr 130-145")),
        vec![Steady, Steady]
    );
    // A quality target makes work; easy segments around it are warm-up and cool-down.
    assert_eq!(
        kinds(&parse("15:00 easy; 20:00 @ threshold; 10:00 easy")),
        vec![Warmup, Work, Cooldown]
    );
    // Between anchors: steady, or recovery when a mode is given.
    assert_eq!(
        kinds(&parse(
            "10:00; 3 x 1:00 @ 5k; 5:00 easy; 3 x 1:00 @ 5k; 4:00 walk; 3 x 1:00 @ 5k; 5:00"
        )),
        vec![Warmup, Work, Steady, Work, Recovery, Work, Cooldown]
    );
    // Keywords win, and an explicit work segment anchors the others.
    assert_eq!(
        kinds(&parse("wu 15:00 easy; work 5km open; cd 10:00 easy")),
        vec![Warmup, Work, Cooldown]
    );
    assert_eq!(
        kinds(&parse("15:00; work 5km; 10:00")),
        vec![Warmup, Work, Cooldown]
    );
    assert_eq!(
        kinds(&parse("steady 1:30:00 easy; 15:00 @ marathon")),
        vec![Steady, Work]
    );
    // A keyword inside a repeat overrides the work default.
    let steps = parse("3 x (steady 5:00 @ marathon, 1:00 @ 5k) / rec 1:00 walk");
    let Step::Repeat { work, recovery, .. } = &steps[0] else {
        panic!("{steps:?}")
    };
    assert_eq!(work[0].kind, Steady);
    assert_eq!(work[1].kind, Work);
    assert_eq!(recovery.as_ref().map(|r| r.kind), Some(Recovery));
}

#[test]
fn hill_is_accepted_and_ignored() {
    assert_eq!(
        parse("6 x 1:00 @ 5k hill / 2:00 jog"),
        parse("6 x 1:00 @ 5k / 2:00 jog")
    );
    assert_eq!(
        parse("6 x 1:00 hill 5k / 2:00 jog"),
        parse("6x1:00@5k/2:00 jog")
    );
}

#[test]
fn describe_then_parse_round_trips() {
    let texts = [
        BASE,
        "45:00 hr 125-145",
        "15:00 easy; 20:00 @ threshold ±4; 10:00 easy",
        "wu 15:00 easy; work 5km open; cd 10:00 easy",
        "2mi easy; 4 x 1mi @ 6:05-6:15/mi / 90s stand; 1mi easy",
        "15:00; 12 x 200m @ mile / 200m walk; 10:00",
        "10:00; 3 x 1:00 @ 5k; 5:00 easy; 3 x 1:00 @ 5k; 4:00 walk; 3 x 1:00 @ 5k; 5:00",
        "3 x (steady 5:00 @ marathon, 1:00 @ 5k ±0) / rec 1:00 walk @ easy",
        "90.5s @ 4:05.5/km; 1.5km @ 4:00/km ±0; 0.5mi @ 10k ±2.5; 1234.5m open",
        "cd 5:00; wu 5:00 hr 120-130; rec 2:00 jog",
    ];
    for text in texts {
        let steps = parse(text);
        let line = describe_line(&steps);
        assert_eq!(parse_line(&line).as_ref(), Ok(&steps), "{text} -> {line}");
    }
    // The writer uses the shortest natural spelling.
    assert_eq!(describe_line(&parse(BASE)), BASE);
    assert_eq!(
        describe_line(&parse("2 mi easy ; 4x1mi@6:05-6:15/mi/90s stand;1mi easy")),
        "2mi easy; 4 x 1mi @ 6:05-6:15/mi / 1:30 stand; 1mi easy"
    );
}

#[test]
fn describe_round_trips_hand_built_steps() {
    use SegmentKind::*;
    let steps = vec![
        Step::Single(seg(
            Recovery,
            Amount::Duration(300.0),
            Target::Open,
            Some(RecoveryMode::Walk),
        )),
        Step::Repeat {
            count: 2,
            work: vec![seg(
                Cooldown,
                Amount::Distance(METRES_PER_MILE),
                Target::PaceRange {
                    slow_mps: METRES_PER_MILE / 400.0,
                    fast_mps: METRES_PER_MILE / 390.0,
                },
                None,
            )],
            recovery: Some(seg(Warmup, Amount::Duration(61.0), named("easy"), None)),
        },
        Step::Single(seg(Work, Amount::Duration(600.0), Target::Open, None)),
        Step::Single(seg(
            Steady,
            Amount::Duration(600.0),
            named("marathon"),
            None,
        )),
    ];
    let line = describe_line(&steps);
    assert_eq!(parse_line(&line), Ok(steps), "{line}");
}

#[test]
fn listing_resolves_named_paces_against_the_profile() {
    let plan = plan_of(parse(BASE));
    let plain = format_expanded(&plan, None);
    assert!(plain.contains("half ±5 s/km"), "{plain}");
    assert!(
        plain.contains("16 intervals, 10 work; planned 48:00"),
        "{plain}"
    );

    let mut profile = AthleteProfile::bare("ines-aldana");
    profile.paces.insert("half".into(), 1000.0 / 245.0);
    profile.paces.insert("easy".into(), 1000.0 / 330.0);
    let listing = format_expanded(&plan, Some(&profile));
    assert!(listing.contains("half 4:05/km (4:00-4:10/km)"), "{listing}");
    assert!(listing.contains("5k ±5 s/km (not in profile)"), "{listing}");
    let lines: Vec<&str> = listing.lines().collect();
    assert!(
        lines
            .iter()
            .any(|l| l.starts_with(" 2  work") && l.ends_with("1/5")),
        "{listing}"
    );
}

#[test]
fn plan_check_exit_codes() {
    use splitdesk::cli::plan_cmd::run_check;
    let ok = run_check(None, Some(BASE), None, false).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(ok, 0);
    let ok = run_check(None, Some(BASE), None, true).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(ok, 0);
    let bad =
        run_check(None, Some("12:00 easy; 5 x x"), None, false).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(bad, 2);
    let neither = run_check(None, None, None, false).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(neither, 2);
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("assets/plans/2026-10-16-progression-repeats.toml");
    assert_eq!(run_check(Some(&path), None, None, false).ok(), Some(0));
    let missing = std::path::Path::new("/nonexistent/plan.toml");
    assert_eq!(run_check(Some(missing), None, None, false).ok(), Some(2));
}
