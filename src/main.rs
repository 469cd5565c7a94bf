use clap::Parser;

fn main() {
    let cli = splitdesk::cli::Cli::parse();
    match splitdesk::cli::run(cli) {
        Ok(code) => std::process::exit(code),
        Err(e) => {
            eprintln!("error: {e:#}");
            std::process::exit(2);
        }
    }
}
