//! Fuzz target `tcx`: see `entry::tcx` and FUZZING.md.
#![cfg_attr(feature = "libfuzzer", no_main)]

#[cfg(feature = "libfuzzer")]
libfuzzer_sys::fuzz_target!(|data: &[u8]| splitdesk_fuzz::entry::tcx(data));

/// Without libFuzzer: replay the files and folders named on the command line.
#[cfg(not(feature = "libfuzzer"))]
fn main() -> std::process::ExitCode {
    splitdesk_fuzz::replay(splitdesk_fuzz::entry::tcx)
}
