//! The `finwake` command line.
fn main() {}
