use splitdesk::plan;
fn main() {
    for l in std::env::args().skip(1) {
        match plan::parse_line(&l) {
            Ok(s) => { println!("OK {}\n   {:?}", plan::describe_line(&s), s); }
            Err(e) => println!("ERR {e}"),
        }
    }
}
