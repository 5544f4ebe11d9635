fn main() {
    println!("mortise {}", mortise::VERSION);
}
