//! Prints drafts for reading: `cargo test --test feedback_print -- --ignored --nocapture`.
mod feedback_support;
use feedback_support::*;
use splitdesk::export::feedback::{draft, FeedbackStyle};
use splitdesk::journal::PurposeVerdict;

#[test]
#[ignore]
fn print_every_kind() {
    let style = FeedbackStyle {
        coach: Some("Sam Adeyemi".into()),
        ..Default::default()
    };
    let filter = std::env::var("DRAFT_FILTER").unwrap_or_default();
    let mut seen = std::collections::HashSet::new();
    for s in demo() {
        if !filter.is_empty() && !s.id.contains(&filter) {
            continue;
        }
        if filter.is_empty() && !seen.insert((s.review.kind, s.profile.id.clone())) {
            continue;
        }
        for v in [PurposeVerdict::Met, PurposeVerdict::Missed] {
            let g = grades(&s.review, v, |k| if k % 3 == 0 { 2 } else { 4 });
            println!("===== {} [{}] {:?}", s.id, s.review.kind.as_str(), v);
            println!("{}", draft(&input(s, g, true), &style));
        }
    }
}

#[test]
#[ignore]
fn list_kinds() {
    for s in demo() {
        println!(
            "{} {} work={} splits={}",
            s.id,
            s.review.kind.as_str(),
            s.review.work().count(),
            s.review.splits.is_some()
        );
    }
}

#[test]
#[ignore]
fn list_cautions() {
    for s in demo() {
        for f in &s.review.findings {
            if f.severity == splitdesk::analysis::findings::Severity::Caution
                || f.code == "cadence_lock"
            {
                println!("{} {} {}", s.id, f.code, &f.text[..f.text.len().min(100)]);
            }
        }
    }
}
