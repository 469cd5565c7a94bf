//! The README's examples of `splitdesk compare` and `splitdesk week` are what the binary
//! prints on the demo roster (self-consistency: the docs never drift from the tool).

mod cli_support;

use std::path::Path;

/// The example block that follows `$ splitdesk ARGS` in the README.
fn example(readme: &str, args: &str) -> String {
    let start = readme
        .find(&format!("$ splitdesk {args}\n"))
        .unwrap_or_else(|| panic!("README has no example of `splitdesk {args}`"));
    let body = &readme[start..];
    let body = &body[body.find('\n').unwrap() + 1..];
    body[..body.find("```").unwrap()].to_string()
}

#[test]
fn the_readme_examples_are_what_the_binary_prints() {
    let readme =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/README.md")).unwrap();
    let roster = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let dir = tempfile::tempdir().unwrap();
    let journal = dir.path().join("journal.sqlite");
    for args in [
        "compare ansel-marchetti/2026-11-12-cruise-miles",
        "week keziah-brandt/2026-11-18-intervals",
    ] {
        let argv: Vec<&str> = args.split(' ').collect();
        let out = cli_support::run(&roster, &journal, &argv);
        assert!(
            out.status.success(),
            "{args}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let printed = String::from_utf8(out.stdout).unwrap();
        assert_eq!(
            example(&readme, args),
            printed,
            "README example of `{args}`"
        );
    }
}
