//! The `onhand` binary: hands the arguments to [`onhand::run`] and exits with its code.

fn main() {
    std::process::exit(onhand::run(std::env::args_os()));
}
