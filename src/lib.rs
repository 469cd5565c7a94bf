//! splitdesk: a terminal workstation for a running coach's daily review.
//!
//! Data flows one way: files → `ingest` → `analysis` → `journal` → views.
//! `model`, `plan` and `analysis` do no I/O and know nothing of terminals.

// Nothing read from a file or typed by a user may panic the program: no unwrap, expect or
// panicking index outside tests (the few justified exceptions carry their own `allow`).
#![cfg_attr(
    not(test),
    deny(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing)
)]

pub mod analysis;
pub mod bias;
pub mod cli;
pub mod config;
pub mod context;
pub mod demo;
pub mod export;
pub mod ingest;
pub mod journal;
pub mod model;
pub mod plan;
pub mod roster;
pub mod tui;
pub mod worker;
pub mod workspace;
