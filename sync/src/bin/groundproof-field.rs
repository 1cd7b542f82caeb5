//! `groundproof-field`: the field kit command line. All logic lives in
//! `groundproof_sync::field::run`.

fn main() -> anyhow::Result<std::process::ExitCode> {
    Ok(groundproof_sync::field::run(std::env::args_os())?)
}
