//! The `hurdle` binary: argument parsing and printing around the library.

/// Writes one line to standard error, as `eprintln!` does, but without panicking when standard
/// error cannot be written (found by review: `2>/dev/full` or a closed pipe turned an error's
/// exit 2, or a success with a note, into a panic's 101): the exit status still says what
/// happened.
macro_rules! say {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        let _ = writeln!(std::io::stderr().lock(), $($arg)*);
    }};
}

mod cli;

use std::process::ExitCode;

use clap::Parser;

/// Exits with 130 and the interrupted message, removing any temporary output folder, unless
/// files are being moved into place (then the run finishes the moves and stops itself).
fn leave_if_not_moving() {
    if hurdle::report::staging::abandon() {
        say!("{}", hurdle::Error::Interrupted);
        std::process::exit(130);
    }
}

fn main() -> ExitCode {
    // Ctrl-C asks the work to stop at its next step, and nothing is written after it; a second
    // Ctrl-C exits at once (removing any temporary output folder) unless files are being moved.
    // Work blocked in a read (a named pipe, a hung network mount) never reaches its next step,
    // so a first stop also starts a watch that leaves as a second would after a few seconds
    // (found by review: one SIGTERM, a scheduler's stop, left such a run waiting).
    let _ = ctrlc::set_handler(|| {
        if hurdle::progress::request_stop() {
            leave_if_not_moving();
            return;
        }
        let _ = std::thread::Builder::new().spawn(|| loop {
            std::thread::sleep(std::time::Duration::from_secs(3));
            leave_if_not_moving();
        });
    });
    // A closed pipe (`hurdle betas CASE | head`) ends the output as it ends any filter's:
    // quietly, with the status a SIGPIPE gives (128 + 13), not with a panic.
    let default_hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        let message = info
            .payload()
            .downcast_ref::<String>()
            .map_or("", String::as_str);
        if message.starts_with("failed printing to stdout") && message.contains("Broken pipe") {
            std::process::exit(141);
        }
        // Any other failure to print (a full disk, `> /dev/full`) is an error of the
        // destination, reported as one: exit 2, not a panic's 101.
        if let Some(reason) = message.strip_prefix("failed printing to stdout: ") {
            say!("error: cannot write to standard output: {reason}");
            std::process::exit(2);
        }
        // A corrupt Parquet file that polars' decoder panics on is reported as an error by the
        // library's guard; the panic itself is not news.
        if hurdle::io::guard::is_guarded(info) {
            return;
        }
        default_hook(info);
    }));
    // Help, the version and argument errors printed as clap prints them, but a failure to print
    // is the destination's error (found by review: `--help > /dev/full` exited 0): exit 2, or
    // 141 for a closed pipe, as any other output.
    let parsed = match cli::Cli::try_parse() {
        Ok(parsed) => parsed,
        Err(error) => {
            if let Err(failure) = error.print() {
                std::process::exit(match failure.kind() {
                    std::io::ErrorKind::BrokenPipe => 141,
                    _ => 2,
                });
            }
            std::process::exit(error.exit_code());
        }
    };
    match cli::run(parsed) {
        Ok(code) => code,
        Err(error @ hurdle::Error::Interrupted) => {
            say!("{error}");
            ExitCode::from(130)
        }
        // One placeholder per line: an `init` case lists dozens.
        Err(hurdle::Error::Placeholders { file, items }) => {
            let heading = hurdle::error::placeholders_heading(items.len());
            say!("error: {}: {}", file.display(), heading.trim_end());
            for item in &items {
                say!("  {}", hurdle::error::one_line(item));
            }
            ExitCode::from(2)
        }
        Err(error) => {
            say!(
                "error: {}",
                hurdle::error::one_line(&cli::render_error(&error))
            );
            ExitCode::from(2)
        }
    }
}
