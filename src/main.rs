// The binary edge: no unwrap, expect or panicking index either.
#![deny(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing)]

use clap::Parser;

fn main() {
    let cli = splitdesk::cli::Cli::parse();
    match splitdesk::cli::run(cli) {
        Ok(code) => std::process::exit(code),
        Err(e) => {
            // Error messages embed paths and text from the roster: made safe for a terminal.
            // A cause the message already names is not repeated.
            let text = splitdesk::cli::out::error_text(&e);
            splitdesk::cli::out::eprint_text(format_args!("error: {text}\n"));
            std::process::exit(2);
        }
    }
}
