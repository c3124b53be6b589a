//! The `steamcell` command line: parses arguments and calls the library (`server`, `api`).
//! Exit codes: 0 success, 1 start-up or I/O failure, 2 a method or cell error.
//!
//! Invariant: no JSON here; `call` passes its params text to `api::call_text` and prints the
//! text it returns.

use clap::{Parser, Subcommand};
use std::process::ExitCode;
use steamcell::api::limits;

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
    /// Serve JSON-RPC 2.0 over HTTP POST and WebSocket, plus GET /health, /schema,
    /// /cell/{quantity}, /site/{name}/{quantity} and the bulk route POST /columns.
    ///
    /// Security: listens on loopback by default. A non-loopback address needs a token
    /// (--token-file or STEAMCELL_TOKEN); with a token every request except GET /health needs
    /// `Authorization: Bearer <token>` (else 401). The Host header must name this server
    /// (localhost, a loopback or the listen address, or --allow-host; else 403). Requests with
    /// an Origin header are refused (403) unless --allow-origin names it; CORS headers are sent
    /// only for such origins. POST bodies must be Content-Type: application/json (else 415;
    /// /columns takes application/x-steamcell-columns).
    /// Beyond a limit: JSON-RPC error 1008 (limit_exceeded) with data {what, limit, value};
    /// HTTP 413 for body, nesting and batch size, 408 for a slow body, 503 for a late answer;
    /// a call refused by --max-in-flight answers 1008 in its JSON-RPC response (503 on the
    /// plain routes GET /cell, /site and POST /columns, which count as calls).
    #[command(verbatim_doc_comment)]
    Serve(Box<ServeArgs>),
    /// Newline-delimited JSON-RPC 2.0 on stdin/stdout (one request or batch per line).
    Stdio,
    /// Run one method in-process and print its JSON result.
    Call {
        /// Method name, e.g. water.state.
        method: String,
        /// Params as one JSON object (default {}).
        params: Option<String>,
        /// The units of bare numbers and of the answer, replacing the params' `units`: a preset
        /// (si, engineering, us, bar, bar_th), key=unit items (preset=bar,p=barg,flow=t/h) or a
        /// JSON object.
        #[arg(long, value_name = "UNITS")]
        units: Option<String>,
    },
    /// Print one property as a bare number, e.g. `steamcell get h p=10MPa T=500degC --units si`
    /// or `steamcell get p p=42barg T=410degC --unit barg`.
    Get {
        /// Result field, e.g. h.
        quantity: String,
        /// Given quantities and options as name=value (units=, units.p=barg, unit=, ambient=).
        pairs: Vec<String>,
        /// The units of bare numbers and of the answer (as units=): a preset, key=unit items or
        /// a JSON object.
        #[arg(long, value_name = "UNITS")]
        units: Option<String>,
        /// The unit of the answered quantity (as unit=), e.g. barg, t/h, MW.
        #[arg(long, value_name = "UNIT")]
        unit: Option<String>,
    },
    /// Print one number of a site balance, e.g.
    /// `steamcell site examples/site/site.json net_power units.MP_users.demand="40 t/h"`.
    /// QUANTITY is a site total (net_power, fuel_heat_input, ...) or a dotted path into the
    /// balance.solve result (units.BPT.power, streams.ds1_out.state.T); each path=value sets a
    /// specification of the network first (as the path of balance.sweep); units= and ambient=
    /// as for the methods.
    Site {
        /// The network file (the `network` of balance.solve, or whole params with one).
        file: std::path::PathBuf,
        /// A site total or a dotted path into the result.
        quantity: String,
        /// Specifications to change, as path=value, and units=/unit=/ambient=.
        pairs: Vec<String>,
        /// The units of bare numbers and of the answer (as units=): a preset, key=unit items or
        /// a JSON object.
        #[arg(long, value_name = "UNITS")]
        units: Option<String>,
        /// The unit of the answered quantity (as unit=), e.g. MW, t/h.
        #[arg(long, value_name = "UNIT")]
        unit: Option<String>,
    },
    /// Write the OpenRPC document.
    Schema {
        /// Output file ("-" for stdout).
        #[arg(long, default_value = "schema/steamcell.openrpc.json")]
        out: String,
    },
}

#[derive(clap::Args)]
struct ServeArgs {
    /// Address to listen on (port 0 picks a free port). Non-loopback needs a token.
    #[arg(long, default_value = steamcell::server::DEFAULT_LISTEN)]
    listen: String,
    /// File holding the bearer token (surrounding whitespace ignored). Overrides STEAMCELL_TOKEN.
    #[arg(long, value_name = "PATH")]
    token_file: Option<std::path::PathBuf>,
    /// Accept this name in the Host header besides localhost and the listen address (repeatable).
    #[arg(long, value_name = "NAME")]
    allow_host: Vec<String>,
    /// Allow cross-origin requests from this origin, e.g. https://sheet.example (repeatable);
    /// CORS headers and preflight answers are given for these origins only.
    #[arg(long, value_name = "ORIGIN")]
    allow_origin: Vec<String>,
    /// Largest HTTP request body, bytes (beyond it HTTP 413 with error 1008).
    #[arg(long, value_name = "BYTES", default_value_t = limits::MAX_REQUEST_BODY_BYTES)]
    max_body_bytes: u32,
    /// Largest response body, bytes.
    #[arg(long, value_name = "BYTES", default_value_t = limits::MAX_RESPONSE_BODY_BYTES)]
    max_response_bytes: u32,
    /// Most calls in one JSON-RPC batch array (HTTP: error 1008 before parsing).
    #[arg(long, value_name = "N", default_value_t = limits::MAX_BATCH_REQUESTS)]
    max_batch_requests: u32,
    /// Most rows in one water.batch call (beyond it error 1008).
    #[arg(long, value_name = "N", default_value_t = limits::MAX_BATCH_ROWS)]
    max_batch_rows: u32,
    /// Deepest nesting of [ and { in a request (a byte scan of an HTTP body before parsing; the
    /// params of each WebSocket call; error 1008). A WebSocket message deeper than the JSON
    /// parser's own limit of 128 fails to parse (-32700) first.
    #[arg(long, value_name = "N", default_value_t = limits::MAX_JSON_DEPTH)]
    max_json_depth: u32,
    /// Largest WebSocket message, bytes.
    #[arg(long, value_name = "BYTES", default_value_t = limits::MAX_WS_MESSAGE_BYTES)]
    max_ws_message_bytes: u32,
    /// Most simultaneous connections (HTTP and WebSocket); beyond it new connections are refused.
    #[arg(long, value_name = "N", default_value_t = limits::MAX_CONNECTIONS)]
    max_connections: u32,
    /// Most method calls running at once over all connections (GET /cell, /site and
    /// POST /columns requests included); beyond it a call answers error 1008 (limit_exceeded)
    /// at once instead of queueing.
    #[arg(long, value_name = "N", default_value_t = limits::MAX_IN_FLIGHT)]
    max_in_flight: u32,
    /// Time limit of one HTTP request (GET routes included), seconds: a body not received in
    /// time answers 408, an answer not ready in time 503 (error 1008; the computation itself
    /// runs to its end, and counts against --max-in-flight until then). Also the time a new
    /// connection has to send its first request headers. WebSocket calls have no time limit.
    #[arg(long, value_name = "SECONDS", default_value_t = limits::REQUEST_TIMEOUT_MS as f64 / 1000.0)]
    request_timeout: f64,
    /// Log level of steamcell's own log lines on stderr: error, warn, info (one line per call
    /// and per refusal, with its request id), debug or trace. Other crates log warnings only;
    /// RUST_LOG, when set, replaces this filter entirely.
    #[arg(long, value_name = "LEVEL", default_value = "warn")]
    log_level: String,
    /// Append one JSON line per method call to this file (time, request id, method, params,
    /// result digest, error code, version, formulation, validation digest); GET /cell, /site
    /// and POST /columns requests are calls too.
    #[arg(long, value_name = "FILE")]
    audit: Option<std::path::PathBuf>,
    /// Register a site network for GET /site/NAME/QUANTITY (repeatable): NAME=FILE, the file
    /// holding the `network` of balance.solve. Each is read and solved at start.
    #[arg(long, value_name = "NAME=FILE")]
    site: Vec<String>,
    /// Stop when standard input reaches its end: for a program (a spreadsheet add-in) that
    /// starts the server as its child and holds its stdin, so that the server ends with it
    /// even when that program is killed.
    #[arg(long)]
    stop_on_stdin_eof: bool,
}

impl ServeArgs {
    fn config(&self) -> Result<steamcell::server::ServeConfig, String> {
        let token = match &self.token_file {
            Some(path) => Some(
                std::fs::read_to_string(path)
                    .map_err(|e| format!("cannot read the token file {}: {e}", path.display()))?
                    .trim()
                    .to_string(),
            ),
            None => std::env::var("STEAMCELL_TOKEN")
                .ok()
                .map(|t| t.trim().to_string()),
        };
        if token.as_deref().is_some_and(str::is_empty) {
            return Err("the token is empty".to_string());
        }
        if !(self.request_timeout.is_finite() && self.request_timeout > 0.0) {
            return Err("--request-timeout must be a positive number of seconds".to_string());
        }
        Ok(steamcell::server::ServeConfig {
            listen: self.listen.clone(),
            token,
            allow_hosts: self.allow_host.clone(),
            allow_origins: self.allow_origin.clone(),
            limits: limits::Settings {
                max_request_body_bytes: self.max_body_bytes,
                max_response_body_bytes: self.max_response_bytes,
                max_batch_requests: self.max_batch_requests,
                max_batch_rows: self.max_batch_rows,
                max_json_depth: self.max_json_depth,
                max_ws_message_bytes: self.max_ws_message_bytes,
                max_connections: self.max_connections,
                max_in_flight: self.max_in_flight,
                request_timeout_ms: (self.request_timeout * 1000.0).round().max(1.0) as u64,
            },
            audit: self.audit.clone(),
            sites: self
                .site
                .iter()
                .map(|s| {
                    s.split_once('=')
                        .map(|(n, f)| (n.trim().to_string(), std::path::PathBuf::from(f.trim())))
                        .ok_or_else(|| format!("--site {s}: write NAME=FILE"))
                })
                .collect::<Result<_, _>>()?,
        })
    }
}

fn runtime() -> std::io::Result<tokio::runtime::Runtime> {
    tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let level = match &cli.command {
        Command::Serve(a) => a.log_level.clone(),
        _ => "warn".to_string(),
    };
    tracing_subscriber::fmt()
        .with_writer(std::io::stderr)
        .with_env_filter(
            tracing_subscriber::EnvFilter::try_from_default_env().unwrap_or_else(|_| {
                tracing_subscriber::EnvFilter::new(format!("warn,steamcell={level}"))
            }),
        )
        .init();
    match cli.command {
        Command::Serve(args) => {
            let cfg = match args.config() {
                Ok(c) => c,
                Err(e) => {
                    eprintln!("steamcell: {e}");
                    return ExitCode::from(1);
                }
            };
            if args.stop_on_stdin_eof {
                stop_on_stdin_eof();
            }
            match runtime().and_then(|rt| rt.block_on(steamcell::server::serve(&cfg))) {
                Ok(()) => ExitCode::SUCCESS,
                Err(e) => {
                    eprintln!("steamcell: cannot serve on {}: {e}", cfg.listen);
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
        Command::Call {
            method,
            params,
            units,
        } => {
            match steamcell::api::call_text_with_units(
                &method,
                params.as_deref().unwrap_or("{}"),
                units.as_deref(),
            ) {
                Ok(pretty) => print_out(&pretty),
                Err(e) => {
                    eprintln!("error {}: {}", e.code, e.message);
                    ExitCode::from(2)
                }
            }
        }
        Command::Get {
            quantity,
            pairs,
            units,
            unit,
        } => {
            let answer = steamcell::api::cell::pairs_from_args(&with_flags(pairs, units, unit))
                .and_then(|p| steamcell::api::cell::cell(&quantity, &p));
            match answer {
                Ok(text) => print_out(&text),
                Err(e) => {
                    eprintln!("{}", e.reason);
                    ExitCode::from(2)
                }
            }
        }
        Command::Site {
            file,
            quantity,
            pairs,
            units,
            unit,
        } => {
            match steamcell::api::site::from_file(&file, &quantity, &with_flags(pairs, units, unit))
            {
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

/// The name=value words with `--units` and `--unit` added as units= and unit=.
fn with_flags(mut pairs: Vec<String>, units: Option<String>, unit: Option<String>) -> Vec<String> {
    pairs.extend(units.map(|u| format!("units={u}")));
    pairs.extend(unit.map(|u| format!("unit={u}")));
    pairs
}

/// Ends the process once standard input reaches its end (or fails): the parent that holds it
/// has closed it or is gone. Nothing is in flight that anyone still waits for.
fn stop_on_stdin_eof() {
    std::thread::spawn(|| {
        let _ = std::io::copy(&mut std::io::stdin().lock(), &mut std::io::sink());
        tracing::info!("standard input closed: stopping (--stop-on-stdin-eof)");
        std::process::exit(0);
    });
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
