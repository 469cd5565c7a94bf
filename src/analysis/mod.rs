//! The objective review: pure functions over `model` types. No I/O, no terminal.

pub mod agreement;
pub mod best_efforts;
pub mod card;
pub mod decoupling;
pub mod earlier;
pub mod elevation;
pub mod findings;
pub mod gradient;
pub mod history;
pub mod intervals;
pub mod kind;
pub mod load;
pub mod motion;
pub mod plausible;
pub mod race;
pub mod review;
pub mod ruler;
pub mod sampling;
pub mod shape;
pub mod splits;
pub mod summary;
pub mod trend;
pub mod week;
pub mod zones;

/// Find the intervals of a cleaned session and review it: the whole objective review.
pub fn analyze(
    session: &crate::model::Session,
    plan: Option<&crate::model::Plan>,
    profile: &crate::model::AthleteProfile,
) -> review::Review {
    // Values no recording can hold read as missing (`plausible`).
    let session = &*plausible::plausible(session);
    // The gradients feed both the interval finder and the review: compute them once.
    // So do the motion states (running, walking, standing, stopped).
    let grads = gradient::gradients(session);
    let motion = motion::classify_with(session, grads.as_deref());
    // Another sport (a ride, a walk) has no intervals to find: the review shows it as what
    // it is (`review::Review::running`).
    let set = if session.sport.analysed_as_running() {
        intervals::find_intervals_moving(session, plan, profile, grads.as_deref(), &motion)
    } else {
        crate::model::IntervalSet::default()
    };
    review::review_moving(session, &set, plan, profile, grads.as_deref(), &motion)
}
