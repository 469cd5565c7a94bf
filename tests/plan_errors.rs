//! Malformed plans: exact line, column and message.

use splitdesk::plan::{parse_line, parse_toml, PlanError};

fn line_err(text: &str) -> PlanError {
    match parse_line(text) {
        Ok(steps) => panic!("{text:?} parsed: {steps:?}"),
        Err(e) => e,
    }
}

fn toml_err(text: &str, name: Option<&str>) -> PlanError {
    match parse_toml(text, name) {
        Ok(plan) => panic!("{text:?} parsed: {plan:?}"),
        Err(e) => e,
    }
}

#[test]
fn shorthand_errors_name_line_column_and_expectation() {
    let cases = [
        (
            "12:00 easy; 5 x x",
            "1:17: expected a duration like 3:00 or a distance like 400m, found \"x\"",
        ),
        (
            "",
            "1:1: expected a step like 12:00 easy or 5 x 400m @ 5k, found end of input",
        ),
        (
            "12 easy",
            "1:4: expected a unit after \"12\": s, min, h, m, km or mi, found \"easy\"",
        ),
        (
            "3:00 @ 4:05",
            "1:12: expected \"/km\" or \"/mi\" after the pace \"4:05\", found end of input",
        ),
        (
            "3:75 easy",
            "1:1: \"3:75\" is not a time: minutes and seconds must be below 60",
        ),
        (
            "5 x (3:00 @ half; 1:00)",
            "1:17: expected \",\" or \")\", found \";\"",
        ),
        (
            "0 x 400m",
            "1:1: expected a repeat count from 1 to 100, found \"0\"",
        ),
        (
            "3:00 hr 150-140",
            "1:9: heart-rate band 150-140 is reversed: write the low end first",
        ),
        ("2 x (400m, 3 x 200m)", "1:12: repeats cannot be nested"),
        (
            "3:00 @ half @ 5k",
            "1:13: this segment already has a target",
        ),
        (
            "3:00 easy 5 x 400m",
            "1:11: expected \";\" between steps, found \"5\"",
        ),
        (
            "4 x 400m @ 4:00-4:10/km ±3",
            "1:25: a pace band takes no tolerance",
        ),
        (
            "3:00 @ jog",
            "1:8: expected a target like easy, half ±5, 4:05/km, 4:00-4:10/km, hr 140-150 or open, found \"jog\"",
        ),
        (
            "3:00 ± 5",
            "1:6: expected \";\" between steps, found \"±\"",
        ),
        ("3:00 & easy", "1:6: unexpected character '&'"),
        (
            "12:00 easy;\n5 x 3:00 @ half /",
            "2:18: expected a duration like 3:00 or a distance like 400m, found end of input",
        ),
        (
            "5 x 400m @ 5k 200m jog",
            "1:15: expected \"/\" before a recovery, or \";\" between steps, found \"200\"",
        ),
        (
            "5 x 400m @ 5k; ;",
            "1:16: expected a step like 12:00 easy or 5 x 400m @ 5k, found \";\"",
        ),
    ];
    for (text, expected) in cases {
        assert_eq!(line_err(text).to_string(), expected, "input: {text:?}");
    }
}

#[test]
fn error_fields_are_typed() {
    let e = line_err("12:00 easy; 5 x x");
    assert_eq!((e.line, e.column), (1, 17));
    assert_eq!(e.context, None);
    assert!(matches!(
        e.kind,
        splitdesk::plan::PlanErrorKind::Expected { ref found, .. } if found == "\"x\""
    ));
}

#[test]
fn shorthand_errors_inside_toml_point_into_the_file() {
    let text = "title = \"t\"\nsteps = \"12:00 easy; 5 x x\"\n";
    assert_eq!(
        toml_err(text, None).to_string(),
        "2:26: expected a duration like 3:00 or a distance like 400m, found \"x\""
    );
    // Multi-line string: the position follows the lines of the file.
    let text =
        "title = \"t\"\nsteps = \"\"\"\n12:00 easy;\n5 x 3:00 @ half / 2:00 jog @;\n\"\"\"\n";
    let e = toml_err(text, None);
    assert_eq!((e.line, e.column), (4, 29));
    // With escapes the string cannot be mapped: the position is inside the string.
    let text = "title = \"t\"\nsteps = \"5 x \\\"400m\\\"\"\n";
    assert_eq!(
        toml_err(text, None).to_string(),
        "steps: 1:5: unexpected character '\"'"
    );
}

#[test]
fn toml_errors_name_line_and_column() {
    let cases: [(&str, Option<&str>, &str); 9] = [
        (
            "title = \"t\"\n[[step]]\nduration = \"8:00\"\npase = \"easy\"\n",
            None,
            "4:1: unknown field `pase`, expected one of `repeat`, `work`, `recovery`, `kind`, \
             `duration`, `distance`, `pace`, `hr`, `tolerance`, `mode`",
        ),
        (
            "title = \"t\nsteps = \"3:00\"\n",
            None,
            "1:11: invalid basic string, expected `\"`",
        ),
        (
            "title = \"t\"\nsteps = \"3:00\"\n[[step]]\nduration = \"3:00\"\n",
            None,
            "3:1: give either steps = \"...\" or [[step]] tables, not both",
        ),
        (
            "title = \"t\"\ndate = 2026-10-15\nsteps = \"3:00\"\n",
            Some("2026-10-14-tempo.toml"),
            "2:8: date 2026-10-15 disagrees with the file name's date 2026-10-14",
        ),
        (
            "title = \"t\"\n[[step]]\nrepeat = 3\n[[step.work]]\nduration = \"3:00\"\n[[step.work]]\npace = \"5k\"\n",
            None,
            "6:1: missing duration = \"3:00\" or distance = \"400m\" in this step",
        ),
        (
            "title = \"t\"\n[[step]]\nrepeat = 0\nduration = \"1:00\"\n",
            None,
            "3:10: repeat must be from 1 to 100, found 0",
        ),
        (
            "title = \"t\"\n[[step]]\nduration = \"3:0x\"\n",
            None,
            "3:16: expected end of the value, found \"x\"",
        ),
        (
            "title = \"t\"\n[[step]]\nduration = \"3:00\"\npace = \"half\"\nhr = \"140-150\"\n",
            None,
            "5:6: give either pace or hr, not both",
        ),
        (
            "purpose = \"p\"\nsteps = \"3:00\"\n",
            None,
            "1:1: missing title = \"...\"",
        ),
    ];
    for (text, name, expected) in cases {
        assert_eq!(
            toml_err(text, name).to_string(),
            expected,
            "input: {text:?}"
        );
    }
}
