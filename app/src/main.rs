//! flowrise command-line entry point (the GUI arrives with the canvas issue).

fn main() {
    println!("flowrise {}", env!("CARGO_PKG_VERSION"));
    println!("usage: flowrise <command> [options]   (commands arrive with the network issue)");
}
