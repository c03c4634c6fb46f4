fn main() -> std::process::ExitCode {
    catena::cli::run()
}
