fn main() {
    println!("splitdesk");
}
