//! The roster summary printed by `splitdesk` until the workstation lands.

use std::path::Path;

use crate::roster::Roster;

pub fn run(root: &Path) -> anyhow::Result<i32> {
    let roster = Roster::open(root)?;
    println!("{} ({})", roster.name, roster.root.display());
    if roster.athletes.is_empty() {
        println!("  no athletes yet");
    }
    for a in &roster.athletes {
        println!(
            "  {:<20} {:<24} {:>3} sessions, {:>2} plans",
            a.id,
            a.profile.name,
            a.activities.len(),
            a.plan_files.len()
        );
    }
    for p in &roster.problems {
        eprintln!("warning: {p}");
    }
    Ok(0)
}
