//! The `mortise` command. All work is in the library (`mortise::cli`).

fn main() {
    let argv: Vec<String> = std::env::args().skip(1).collect();
    match mortise::cli::run_cli(&argv) {
        Ok(out) => print!("{out}"),
        Err(e) => {
            eprintln!("mortise: {e}");
            std::process::exit(match e.kind {
                mortise::ErrorKind::Usage => 2,
                _ => 1,
            });
        }
    }
}
