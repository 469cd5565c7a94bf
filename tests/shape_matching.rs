//! Workout shapes: the same workout written in different ways matches, different workouts do
//! not (`analysis::shape`). Plans are our own; the tolerances are the module's design choices.

use splitdesk::analysis::shape::{
    self, counts_match, from_plan, same_workout, ShapeBlock, ShapeRecovery, ShapeRep, ShapeSource,
    WorkoutShape,
};
use splitdesk::model::Plan;
use splitdesk::plan::{parse_line, parse_toml};

fn line(steps: &str) -> WorkoutShape {
    let steps = parse_line(steps).unwrap_or_else(|e| panic!("{steps}: {e}"));
    from_plan(&Plan {
        title: "t".into(),
        purpose: String::new(),
        date: None,
        steps,
    })
    .expect("a plan with work has a shape")
}

fn toml(text: &str) -> WorkoutShape {
    let plan = parse_toml(text, Some("2026-11-12-reps.toml")).unwrap_or_else(|e| panic!("{e}"));
    from_plan(&plan).expect("a plan with work has a shape")
}

fn matches(a: &WorkoutShape, b: &WorkoutShape) -> bool {
    // The relation is symmetric: check both ways every time.
    let ab = same_workout(a, b);
    assert_eq!(ab, same_workout(b, a), "{} / {}", a.label, b.label);
    ab
}

/// A detected shape: one block of `count` like reps (median duration and distance).
fn detected(
    count: u32,
    duration_s: f64,
    distance_m: f64,
    rec: Option<(f64, f64, &str)>,
) -> WorkoutShape {
    let blocks = vec![ShapeBlock {
        count,
        work: vec![ShapeRep {
            duration_s: Some(duration_s),
            distance_m: Some(distance_m),
            target: None,
        }],
        recovery: rec.map(|(d, m, mode)| ShapeRecovery {
            mode: Some(mode.to_string()),
            duration_s: Some(d),
            distance_m: Some(m),
        }),
    }];
    WorkoutShape {
        source: ShapeSource::Detected,
        label: "detected".into(),
        blocks,
    }
}

#[test]
fn shorthand_and_toml_steps_are_the_same_workout() {
    let short = line("15:00 easy; 6 x 800m @ 5k / 2:00 jog; 10:00 easy");
    let tables = toml(
        r#"
title = "Eight hundreds"
purpose = "p"

[[step]]
duration = "15:00"
pace = "easy"

[[step]]
repeat = 6
distance = "800m"
pace = "5k"

[step.recovery]
duration = "2:00"
mode = "jog"

[[step]]
duration = "10:00"
pace = "easy"
"#,
    );
    assert_eq!(short.blocks, tables.blocks);
    assert_eq!(short.label, "6 x 800 m @ 5k / 2:00 jog");
    assert!(matches(&short, &tables));
    // The warm-up and cool-down are not part of the workout.
    assert!(matches(
        &short,
        &line("20:00 easy; 6 x 800m @ 5k / 2:00 jog")
    ));
}

#[test]
fn six_against_five_reps_and_ten_against_eight_match() {
    let six = line("15:00 easy; 6 x 800m @ 5k / 2:00 jog; 10:00 easy");
    let five = line("15:00 easy; 5 x 800m @ 5k / 2:00 jog; 10:00 easy");
    assert!(matches(&six, &five));
    let ten = line("10 x 200m @ 3:20-3:30/km / 200m walk");
    let eight = line("8 x 200m @ 3:20-3:30/km / 200m walk");
    assert!(matches(&ten, &eight));
    // Seven is 30 % under ten and more than one away: another session.
    assert!(!matches(&ten, &line("7 x 200m @ 3:20-3:30/km / 200m walk")));
    // Two repeats are not three, one block is not two.
    assert!(!counts_match(2, 3));
    assert!(!counts_match(1, 2));
    assert!(counts_match(3, 4));
    assert!(counts_match(20, 16));
    assert!(!counts_match(20, 15));
}

#[test]
fn kilometres_against_miles() {
    // 400 m and a quarter mile (402.3 m) are 0.6 % apart.
    let metres = line("8 x 400m @ 5k / 1:30 jog");
    let miles = line("8 x 0.25mi @ 5k / 1:30 jog");
    assert!(matches(&metres, &miles));
    // 1 km and 1 mi are 38 % apart: not the same reps.
    assert!(!matches(
        &line("4 x 1km @ threshold / 2:00 jog"),
        &line("4 x 1mi @ threshold / 2:00 jog")
    ));
    // 1.6 km and 1 mi (1609 m) are 0.6 % apart.
    assert!(matches(
        &line("3 x 1.6km @ threshold / 1:30 jog"),
        &line("3 x 1mi @ threshold / 1:30 jog")
    ));
    assert_eq!(
        line("3 x 1mi @ threshold / 1:30 jog").label,
        "3 x 1 mi @ threshold / 1:30 jog"
    );
}

#[test]
fn different_workouts_do_not_match() {
    let eight_hundreds = line("15:00 easy; 6 x 800m @ 5k / 2:00 jog; 10:00 easy");
    let four_hundreds = line("15:00 easy; 6 x 400m @ 5k / 2:00 jog; 10:00 easy");
    assert!(!matches(&eight_hundreds, &four_hundreds));
    // A tempo (one block) against intervals.
    let tempo = line("15:00 easy; 20:00 @ threshold; 10:00 easy");
    assert!(!matches(
        &tempo,
        &line("15:00 easy; 5 x 4:00 @ threshold / 1:00 jog")
    ));
    assert!(!matches(
        &tempo,
        &line("15:00 easy; 2 x 20:00 @ threshold / 3:00 jog")
    ));
    // A 15-minute tempo is not a 30-minute one.
    assert!(!matches(&tempo, &line("30:00 @ threshold")));
    assert!(matches(&tempo, &line("21:00 @ threshold")));
    // 3 x 1 mi against 6 x 1:30.
    assert!(!matches(
        &line("3 x 1mi @ threshold / 1:30 jog"),
        &line("6 x 1:30 @ 5k / 2:30 jog")
    ));
    // Target names must agree.
    assert!(!matches(
        &line("6 x 800m @ 5k / 2:00 jog"),
        &line("6 x 800m @ threshold / 2:00 jog")
    ));
    // Recovery taken another way, or of another length.
    assert!(!matches(
        &line("6 x 800m @ 5k / 2:00 jog"),
        &line("6 x 800m @ 5k / 2:00 walk")
    ));
    assert!(!matches(
        &line("3 x 1mi @ threshold / 1:30 jog"),
        &line("3 x 1mi @ threshold / 3:00 jog")
    ));
    // A timed piece against a measured one (plan against plan) is another workout.
    assert!(!matches(
        &line("6 x 3:00 @ 5k / 2:00 jog"),
        &line("6 x 800m @ 5k / 2:00 jog")
    ));
}

#[test]
fn a_plan_without_work_has_no_shape() {
    let steps = parse_line("45:00 easy").unwrap();
    let plan = Plan {
        title: "t".into(),
        purpose: String::new(),
        date: None,
        steps,
    };
    assert_eq!(from_plan(&plan), None);
}

#[test]
fn a_detected_set_matches_the_plan_on_the_plans_amount() {
    // 6 reps of 803 m in 2:41 with 2:05 jogs: a plan's 6 x 800 m / 2:00 jog.
    let found = detected(6, 161.0, 803.0, Some((125.0, 260.0, "jog")));
    assert!(matches(&found, &line("6 x 800m @ 5k / 2:00 jog")));
    // ... and a plan's 6 x 2:40 (on the duration).
    assert!(matches(&found, &line("6 x 2:40 @ 5k / 2:00 jog")));
    // Not 6 x 400 m, nor 6 x 3:30.
    assert!(!matches(&found, &line("6 x 400m @ 5k / 2:00 jog")));
    assert!(!matches(&found, &line("6 x 3:30 @ 5k / 2:00 jog")));
    // Two detected sets match on either amount: the same 90-s hill reps cover 350 m one
    // week and 380 m the next (8.6 % apart) in the same time.
    let a = detected(6, 90.0, 350.0, Some((150.0, 300.0, "jog")));
    let b = detected(6, 91.0, 380.0, Some((150.0, 310.0, "jog")));
    assert!(matches(&a, &b));
    // A walked recovery is not a jogged one.
    let walked = detected(6, 90.0, 350.0, Some((150.0, 180.0, "walk")));
    assert!(!matches(&a, &walked));
    // A detected tempo (one block) is not a detected pair of reps.
    assert!(!matches(
        &detected(1, 1200.0, 4800.0, None),
        &detected(2, 1200.0, 4800.0, Some((120.0, 250.0, "jog")))
    ));
}

#[test]
fn a_progression_written_as_single_pieces_matches_its_detected_set() {
    // Three one-mile pieces at rising targets, written one by one (three blocks), against
    // the set of three one-mile reps the analysis found without the plan.
    let written =
        line("15:00 easy; 1mi @ marathon; 1:00 jog; 1mi @ half; 1:00 jog; 1mi @ 10k; 10:00 easy");
    assert_eq!(written.blocks.len(), 3);
    let found = detected(3, 400.0, 1612.0, Some((60.0, 150.0, "jog")));
    assert!(matches(&written, &found));
    // Not a set of four, nor of three kilometres.
    assert!(!matches(&written, &detected(3, 260.0, 1003.0, None)));
    // Written the same way twice, it matches block by block.
    assert!(matches(
        &written,
        &line("20:00 easy; 1mi @ marathon; 1:30 jog; 1mi @ half; 1:30 jog; 1mi @ 10k")
    ));
}

#[test]
fn a_ladder_is_not_a_set_of_like_reps() {
    // A detected ladder keeps its pieces one by one (a single block).
    let ladder = WorkoutShape {
        source: ShapeSource::Detected,
        label: "ladder".into(),
        blocks: vec![ShapeBlock {
            count: 1,
            work: [400.0, 800.0, 1200.0, 800.0, 400.0]
                .iter()
                .map(|m| ShapeRep {
                    duration_s: Some(m * 0.2),
                    distance_m: Some(*m),
                    target: None,
                })
                .collect(),
            recovery: None,
        }],
    };
    assert!(matches(&ladder, &ladder.clone()));
    assert!(!matches(&ladder, &detected(5, 160.0, 800.0, None)));
    assert!(matches(
        &ladder,
        &line("400m @ 5k; 2:00 jog; 800m @ 5k; 2:00 jog; 1200m @ 5k; 2:00 jog; 800m @ 5k; 2:00 jog; 400m @ 5k")
    ));
    assert!(shape::pieces_match(
        &ShapeRep {
            duration_s: None,
            distance_m: Some(1000.0),
            target: None
        },
        &ShapeRep {
            duration_s: None,
            distance_m: Some(1049.0),
            target: None
        }
    ));
}
