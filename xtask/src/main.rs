fn main() { println!("xtask: not yet"); }
