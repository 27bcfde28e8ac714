//! The `nidus` command line (work in progress: the lead wires subcommands here).
fn main() {}
