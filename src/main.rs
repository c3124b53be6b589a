//! The `steamcell` command line: parses arguments and calls the library (`server`, `api`).
//! Exit codes: 0 success, 1 start-up or I/O failure, 2 a method or cell error.

use clap::{Parser, Subcommand};
use std::process::ExitCode;

#[derive(Parser)]
#[command(
    name = "steamcell",
    version,
    about = "Water and steam properties (IAPWS-IF97) as a local calculation server"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Serve JSON-RPC 2.0 over HTTP POST and WebSocket, plus GET /health, /schema, /cell/{quantity}.
    Serve {
        /// Address to listen on (port 0 picks a free port).
        #[arg(long, default_value = steamcell::server::DEFAULT_LISTEN)]
        listen: String,
    },
    /// Newline-delimited JSON-RPC 2.0 on stdin/stdout (one request or batch per line).
    Stdio,
    /// Run one method in-process and print its JSON result.
    Call {
        /// Method name, e.g. water.state.
        method: String,
        /// Params as one JSON object (default {}).
        params: Option<String>,
    },
    /// Print one property as a bare number, e.g. `steamcell get h p=10MPa T=500degC units=si`.
    Get {
        /// Result field, e.g. h.
        quantity: String,
        /// Given quantities and options as name=value.
        pairs: Vec<String>,
    },
    /// Write the OpenRPC document.
    Schema {
        /// Output file ("-" for stdout).
        #[arg(long, default_value = "schema/steamcell.openrpc.json")]
        out: String,
    },
}

fn runtime() -> std::io::Result<tokio::runtime::Runtime> {
    tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    tracing_subscriber::fmt()
        .with_writer(std::io::stderr)
        .with_env_filter(
            tracing_subscriber::EnvFilter::try_from_default_env()
                .unwrap_or_else(|_| tracing_subscriber::EnvFilter::new("warn")),
        )
        .init();
    match cli.command {
        Command::Serve { listen } => {
            match runtime().and_then(|rt| rt.block_on(steamcell::server::serve(&listen))) {
                Ok(()) => ExitCode::SUCCESS,
                Err(e) => {
                    eprintln!("steamcell: cannot serve on {listen}: {e}");
                    ExitCode::from(1)
                }
            }
        }
        Command::Stdio => {
            match runtime().and_then(|rt| rt.block_on(steamcell::server::stdio::serve_stdio())) {
                Ok(()) => ExitCode::SUCCESS,
                Err(e) => {
                    eprintln!("steamcell: stdio: {e}");
                    ExitCode::from(1)
                }
            }
        }
        Command::Call { method, params } => {
            match steamcell::api::call_text(&method, params.as_deref().unwrap_or("{}")) {
                Ok(pretty) => print_out(&pretty),
                Err(e) => {
                    eprintln!("error {}: {}", e.code, e.message);
                    ExitCode::from(2)
                }
            }
        }
        Command::Get { quantity, pairs } => {
            let answer = steamcell::api::cell::pairs_from_args(&pairs)
                .and_then(|p| steamcell::api::cell::cell(&quantity, &p));
            match answer {
                Ok(text) => print_out(&text),
                Err(e) => {
                    eprintln!("{}", e.reason);
                    ExitCode::from(2)
                }
            }
        }
        Command::Schema { out } => {
            let text = steamcell::api::openrpc::document_text();
            let written = if out == "-" {
                use std::io::Write;
                std::io::stdout().write_all(text.as_bytes())
            } else {
                std::path::Path::new(&out)
                    .parent()
                    .filter(|d| !d.as_os_str().is_empty())
                    .map_or(Ok(()), std::fs::create_dir_all)
                    .and_then(|()| std::fs::write(&out, text))
            };
            match written {
                Ok(()) => ExitCode::SUCCESS,
                Err(e) => {
                    eprintln!("steamcell: cannot write {out}: {e}");
                    ExitCode::from(1)
                }
            }
        }
    }
}

/// Prints a result line; a closed pipe (e.g. `| head`) ends quietly instead of panicking.
fn print_out(text: &str) -> ExitCode {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    match writeln!(out, "{text}").and_then(|_| out.flush()) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("steamcell: cannot write the result: {e}");
            ExitCode::from(1)
        }
    }
}
