use splitdesk::plan;
fn main() {
    for f in std::env::args().skip(1) {
        let text = std::fs::read_to_string(&f).unwrap();
        match plan::parse_toml(&text, Some(&f)) {
            Ok(p) => { println!("OK {f}: {}\n{}", plan::describe_line(&p.steps), plan::format_expanded(&p, None)); }
            Err(e) => println!("ERR {f}: {e}\n{}", e.snippet(&text).unwrap_or_default()),
        }
    }
}
